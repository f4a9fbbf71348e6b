import 'server-only';
import { Op } from 'sequelize';
import { Membership, User } from '@/models';
import type { Role } from '@/lib/roles';

/** E-mail addresses of active people holding one of `roles` at a site (site memberships and study-wide ones), sorted. */
export async function memberEmails(studyId: number, siteId: number, roles: Role[]): Promise<string[]> {
  const ms = await Membership.findAll({
    where: { studyId, role: { [Op.in]: roles }, revokedAt: { [Op.is]: null }, [Op.or]: [{ siteId }, { siteId: null }] },
    include: [{ model: User, as: 'user', where: { status: 'active' } }],
  });
  return [...new Set(ms.map((m) => (m as unknown as { user: User }).user.email))].sort();
}
