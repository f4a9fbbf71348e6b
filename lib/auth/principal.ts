import 'server-only';
import { QueryTypes } from 'sequelize';
import { sequelize } from '@/models';
import type { Role } from '@/lib/roles';

/** One active membership, with the codes the interface and URLs use. */
export type MembershipView = { id: number; role: Role; studyId: number; studyCode: string; studyTitle: string; siteId: number | null; siteCode: string | null; siteName: string | null };

/** The signed-in person as the server sees them on this request. */
export type Principal = { id: number; email: string; name: string; memberships: MembershipView[] };

type PrincipalRow = {
  id: number; email: string; name: string; status: string;
  mid: number | null; role: Role | null; study_id: number | null; study_code: string | null; study_title: string | null; site_id: number | null; site_code: string | null; site_name: string | null;
};

/**
 * Loads an active user and their current memberships; null when the account is missing or deactivated. Every
 * authenticated request runs this, so it is one plain SQL query (user, memberships, their studies and sites) rather
 * than model look-ups with includes, which cost several times as much processor time per request.
 */
export async function loadPrincipal(userId: number): Promise<Principal | null> {
  const rows = await sequelize.query<PrincipalRow>(
    `SELECT u.id, u.email, u.name, u.status, m.id AS mid, m.role, m.study_id, st.code AS study_code, st.title AS study_title,
            m.site_id, si.code AS site_code, si.name AS site_name
       FROM users u
       LEFT JOIN memberships m ON m.user_id = u.id AND m.revoked_at IS NULL
       LEFT JOIN studies st ON st.id = m.study_id
       LEFT JOIN sites si ON si.id = m.site_id
      WHERE u.id = ?
      ORDER BY m.study_id, m.site_id, m.id`,
    { replacements: [userId], type: QueryTypes.SELECT },
  );
  const user = rows[0];
  if (!user || user.status !== 'active') return null;
  return {
    id: Number(user.id),
    email: user.email,
    name: user.name,
    memberships: rows
      .filter((m) => m.mid !== null)
      .map((m) => ({
        id: Number(m.mid), role: m.role as Role, studyId: Number(m.study_id), studyCode: m.study_code as string, studyTitle: m.study_title as string,
        siteId: m.site_id === null ? null : Number(m.site_id), siteCode: m.site_code, siteName: m.site_name,
      })),
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
export function sitesFor(p: Pick<Principal, 'memberships'>, studyId: number, roles: readonly Role[]): 'all' | number[] {
  const ids = new Set<number>();
  for (const m of p.memberships) {
    if (m.studyId !== studyId || !roles.includes(m.role)) continue;
    if (m.siteId === null) return 'all';
    ids.add(m.siteId);
  }
  return [...ids];
}
