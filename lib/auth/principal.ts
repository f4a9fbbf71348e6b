import 'server-only';
import { Op } from 'sequelize';
import { Membership, Site, Study, User } from '@/models';
import type { Role } from '@/lib/roles';

/** One active membership, with the codes the interface and URLs use. */
export type MembershipView = { id: number; role: Role; studyId: number; studyCode: string; studyTitle: string; siteId: number | null; siteCode: string | null; siteName: string | null };

/** The signed-in person as the server sees them on this request. */
export type Principal = { id: number; email: string; name: string; memberships: MembershipView[] };

/** Loads an active user and their current memberships; null when the account is missing or deactivated. */
export async function loadPrincipal(userId: number): Promise<Principal | null> {
  const user = await User.findByPk(userId, { attributes: ['id', 'email', 'name', 'status'] });
  if (!user || user.status !== 'active') return null;
  const ms = await Membership.findAll({
    where: { userId, revokedAt: { [Op.is]: null } },
    include: [
      { model: Study, as: 'study', attributes: ['id', 'code', 'title'] },
      { model: Site, as: 'site', attributes: ['id', 'code', 'name'] },
    ],
    order: [['studyId', 'ASC'], ['siteId', 'ASC'], ['id', 'ASC']],
  });
  return {
    id: user.id,
    email: user.email,
    name: user.name,
    memberships: ms.map((m) => {
      const study = (m as unknown as { study: Study }).study;
      const site = (m as unknown as { site: Site | null }).site;
      return { id: m.id, role: m.role, studyId: m.studyId as number, studyCode: study.code, studyTitle: study.title, siteId: m.siteId, siteCode: site?.code ?? null, siteName: site?.name ?? null };
    }),
  };
}

/** Roles the principal holds in a study; with a site id, only memberships for that site or for all sites count. */
export function rolesIn(p: Principal, studyId: number, siteId?: number): Role[] {
  const roles = new Set<Role>();
  for (const m of p.memberships) {
    if (m.studyId !== studyId) continue;
    if (siteId !== undefined && m.siteId !== null && m.siteId !== siteId) continue;
    roles.add(m.role);
  }
  return [...roles];
}

/** Site ids the principal may see in a study for the given roles; 'all' when a study-wide membership grants it. */
export function sitesFor(p: Principal, studyId: number, roles: readonly Role[]): 'all' | number[] {
  const ids = new Set<number>();
  for (const m of p.memberships) {
    if (m.studyId !== studyId || !roles.includes(m.role)) continue;
    if (m.siteId === null) return 'all';
    ids.add(m.siteId);
  }
  return [...ids];
}
