import 'server-only';
import { Op, type WhereOptions } from 'sequelize';
import { Membership, Site, User, sequelize } from '@/models';
import { AppError } from '@/lib/errors';
import { appendAudit } from '@/lib/audit';
import { resolveMembershipScope, type Actor } from './invitations';
import type { Role } from '@/lib/roles';
import { assertWritable } from '@/lib/lock';

/** A row of the administrator's user table (presenter: no password hash, no lock details). */
export type StudyUserRow = {
  id: number;
  name: string;
  email: string;
  status: 'invited' | 'active' | 'deactivated';
  lastLoginAt: string | null;
  memberships: { id: number; role: Role; site: string | null }[];
};

/** People holding (or having held) a role in the study, paged and searchable by name or e-mail. */
export async function listStudyUsers(studyId: number, q: { page: number; pageSize: number; search?: string }): Promise<{ rows: StudyUserRow[]; total: number }> {
  const memberIds = (await Membership.findAll({ where: { studyId }, attributes: ['userId'], group: ['userId'], raw: true })).map((m) => m.userId as number);
  if (memberIds.length === 0) return { rows: [], total: 0 };
  const where: WhereOptions = { id: { [Op.in]: memberIds } };
  if (q.search) {
    const like = `%${q.search.replace(/[\\%_]/g, (c) => `\\${c}`)}%`;
    Object.assign(where, { [Op.or]: [{ name: { [Op.like]: like } }, { email: { [Op.like]: like } }] });
  }
  const { rows, count } = await User.findAndCountAll({ where, order: [['name', 'ASC'], ['id', 'ASC']], offset: (q.page - 1) * q.pageSize, limit: q.pageSize });
  const ms = await Membership.findAll({
    where: { studyId, userId: { [Op.in]: rows.map((u) => u.id) }, revokedAt: { [Op.is]: null } },
    include: [{ model: Site, as: 'site', attributes: ['code'] }],
    order: [['id', 'ASC']],
  });
  return {
    total: count,
    rows: rows.map((u) => ({
      id: u.id,
      name: u.name,
      email: u.email,
      status: u.status,
      lastLoginAt: u.lastLoginAt?.toISOString() ?? null,
      memberships: ms.filter((m) => m.userId === u.id).map((m) => ({ id: m.id, role: m.role, site: (m as unknown as { site: Site | null }).site?.code ?? null })),
    })),
  };
}

async function userInStudy(studyId: number, userId: number, t: import('sequelize').Transaction) {
  const user = await User.findByPk(userId, { transaction: t, lock: t.LOCK.UPDATE });
  const member = user && (await Membership.findOne({ where: { studyId, userId }, transaction: t }));
  if (!user || !member) throw new AppError('not_found', 'The person was not found in this study.');
  return user;
}

/** Deactivates an account: it can no longer sign in, and its sessions stop on their next request. */
export async function deactivateUser(a: { studyId: number; userId: number; reason: string; actor: Actor }) {
  if (a.userId === a.actor.userId) throw new AppError('conflict', 'You cannot deactivate your own account.');
  return sequelize.transaction(async (t) => {
    const user = await userInStudy(a.studyId, a.userId, t);
    if (user.status === 'deactivated') throw new AppError('conflict', 'The account is already deactivated.');
    const old = user.status;
    await user.update({ status: 'deactivated' }, { transaction: t });
    await appendAudit(t, [{ actorUserId: a.actor.userId, actorRole: a.actor.role, studyId: a.studyId, entityType: 'user', entityId: user.id, action: 'update', itemPath: '/status', oldValue: old, newValue: 'deactivated', reason: a.reason, requestId: a.actor.requestId }]);
    return { id: user.id, status: 'deactivated' as const };
  });
}

/** Gives an existing member of the study another role (or the same role at another site). */
export async function addMembership(a: { studyId: number; userId: number; role: Role; siteCode: string | null; actor: Actor }) {
  const siteId = await resolveMembershipScope(a.studyId, a.role, a.siteCode);
  return sequelize.transaction(async (t) => {
    await assertWritable(a.studyId, siteId, 'admin', t);
    const user = await userInStudy(a.studyId, a.userId, t);
    if (user.status === 'deactivated') throw new AppError('conflict', 'The account is deactivated.');
    const dup = await Membership.findOne({ where: { userId: user.id, studyId: a.studyId, siteId, role: a.role, revokedAt: { [Op.is]: null } }, transaction: t });
    if (dup) throw new AppError('conflict', 'This person already holds that role here.');
    const m = await Membership.create({ userId: user.id, studyId: a.studyId, siteId, role: a.role, revokedAt: null }, { transaction: t });
    await appendAudit(t, [{ actorUserId: a.actor.userId, actorRole: a.actor.role, studyId: a.studyId, siteId, entityType: 'membership', entityId: m.id, action: 'create', newValue: { userId: user.id, role: a.role, siteId }, requestId: a.actor.requestId }]);
    return { id: m.id };
  });
}

/** Revokes a membership (kept with its revocation time); access ends on the person's next request. */
export async function revokeMembership(a: { studyId: number; membershipId: number; reason: string; actor: Actor }) {
  return sequelize.transaction(async (t) => {
    await assertWritable(a.studyId, null, 'admin', t);
    const m = await Membership.findOne({ where: { id: a.membershipId, studyId: a.studyId }, transaction: t, lock: t.LOCK.UPDATE });
    if (!m) throw new AppError('not_found', 'The membership was not found in this study.');
    if (m.revokedAt) throw new AppError('conflict', 'The membership is already revoked.');
    if (m.userId === a.actor.userId && m.role === 'admin') throw new AppError('conflict', 'You cannot revoke your own administrator role.');
    const now = new Date();
    await m.update({ revokedAt: now }, { transaction: t });
    await appendAudit(t, [{ actorUserId: a.actor.userId, actorRole: a.actor.role, studyId: a.studyId, siteId: m.siteId, entityType: 'membership', entityId: m.id, action: 'revoke', itemPath: '/revokedAt', oldValue: null, newValue: now.toISOString(), reason: a.reason, requestId: a.actor.requestId }]);
    return { id: m.id, revokedAt: now.toISOString() };
  });
}
