import 'server-only';
import { Op } from 'sequelize';
import { Membership, User } from '@/models';
import type { Role } from '@/lib/roles';

/** The people holding a current role at one site (site memberships only; study-wide roles are not listed). */
export async function siteTeam(studyId: number, siteId: number): Promise<{ name: string; role: Role }[]> {
  const ms = await Membership.findAll({
    where: { studyId, siteId, revokedAt: { [Op.is]: null } },
    include: [{ model: User, as: 'user', attributes: ['name', 'status'], where: { status: 'active' } }],
    order: [['role', 'ASC']],
  });
  return ms.map((m) => ({ name: (m as unknown as { user: User }).user.name, role: m.role }));
}
