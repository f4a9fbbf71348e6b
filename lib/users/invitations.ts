import 'server-only';
import { createHash, randomBytes } from 'node:crypto';
import { Op } from 'sequelize';
import { Invitation, Membership, Site, User, sequelize } from '@/models';
import { AppError } from '@/lib/errors';
import { appendAudit } from '@/lib/audit';
import { sendMail } from '@/lib/mail';
import { config } from '@/lib/config';
import { logger } from '@/lib/log';
import { logAccess } from '@/lib/access-log';
import { hashPassword, passwordProblem } from '@/lib/auth/password';
import { ROLE_LABELS, STUDY_WIDE_ROLES, type Role } from '@/lib/roles';

export const INVITATION_HOURS = 72;
/** Roles that always belong to one site. */
export const SITE_ROLES: readonly Role[] = ['coordinator', 'therapist', 'assessor'];

const tokenHash = (token: string) => createHash('sha256').update(token, 'utf8').digest('hex');

/** The actor of an administrative change, as it goes into the audit trail. */
export type Actor = { userId: number; role: Role; requestId?: string };

/** Checks that a role fits the scope asked for (study-wide roles have no site; site roles need one). */
export async function resolveMembershipScope(studyId: number, role: Role, siteCode: string | null): Promise<number | null> {
  if (STUDY_WIDE_ROLES.includes(role) && siteCode) throw new AppError('validation_failed', `${ROLE_LABELS[role]} is a study-wide role.`, { fields: { site: 'Leave the site empty for this role.' } });
  if (SITE_ROLES.includes(role) && !siteCode) throw new AppError('validation_failed', `${ROLE_LABELS[role]} works at one site.`, { fields: { site: 'Choose the site.' } });
  if (!siteCode) return null;
  const site = await Site.findOne({ where: { studyId, code: siteCode } });
  if (!site) throw new AppError('validation_failed', 'That site is not part of this study.', { fields: { site: 'Unknown site.' } });
  return site.id;
}

async function issueInvitation(userId: number, membershipId: number | null, actor: Actor, t: import('sequelize').Transaction, now: Date) {
  const token = randomBytes(32).toString('base64url');
  // Earlier unused links for this person stop working: only the newest invitation is valid.
  await Invitation.update({ expiresAt: now }, { where: { userId, usedAt: { [Op.is]: null }, expiresAt: { [Op.gt]: now } }, transaction: t });
  const inv = await Invitation.create(
    { userId, membershipId, tokenHash: tokenHash(token), expiresAt: new Date(now.getTime() + INVITATION_HOURS * 3600_000), usedAt: null, invitedByUserId: actor.userId },
    { transaction: t },
  );
  return { token, invitation: inv };
}

async function mailInvitation(to: string, name: string, studyTitle: string, roleText: string, token: string): Promise<boolean> {
  const link = `${config.baseUrl()}/invite/${token}`;
  try {
    await sendMail({
      to,
      subject: `Excursion: your account for ${studyTitle}`,
      text:
        `Hello ${name},\n\nYou have been given access to ${studyTitle} as ${roleText}.\n` +
        `Set your password with this link (it works once and expires in ${INVITATION_HOURS} hours):\n\n${link}\n\n` +
        `If you did not expect this message, ignore it.\n\nExcursion captures research data under an approved protocol; it is not a medical device.`,
    });
    return true;
  } catch (e) {
    logger.error({ err: String(e) }, 'invitation e-mail could not be sent');
    return false;
  }
}

/**
 * Invites a person to a study role: creates the account if new, the membership and a one-time link,
 * all audited in one transaction; then e-mails the link. `emailSent` false means the record stands
 * but the message failed (the administrator can resend).
 */
export async function inviteUser(a: {
  study: { id: number; title: string };
  email: string;
  name: string;
  role: Role;
  siteCode: string | null;
  actor: Actor;
  now?: Date;
}): Promise<{ userId: number; membershipId: number; emailSent: boolean; expiresAt: string }> {
  const now = a.now ?? new Date();
  const email = a.email.trim().toLowerCase();
  const siteId = await resolveMembershipScope(a.study.id, a.role, a.siteCode);
  const out = await sequelize.transaction(async (t) => {
    let user = await User.findOne({ where: { email }, transaction: t, lock: t.LOCK.UPDATE });
    const audit = [];
    if (user?.status === 'deactivated') throw new AppError('conflict', 'This account is deactivated. Reactivation is not offered; e-mail addresses of deactivated accounts are never reused.');
    if (!user) {
      user = await User.create({ email, name: a.name.trim(), passwordHash: null, lockedUntil: null, lastLoginAt: null }, { transaction: t });
      audit.push({ entityType: 'user', entityId: user.id, action: 'create', newValue: { email, name: user.name, status: 'invited' } });
    }
    const dup = await Membership.findOne({ where: { userId: user.id, studyId: a.study.id, siteId, role: a.role, revokedAt: { [Op.is]: null } }, transaction: t });
    if (dup) throw new AppError('conflict', 'This person already holds that role here.');
    const m = await Membership.create({ userId: user.id, studyId: a.study.id, siteId, role: a.role, revokedAt: null }, { transaction: t });
    audit.push({ entityType: 'membership', entityId: m.id, action: 'create', newValue: { userId: user.id, role: a.role, siteId } });
    const inv = user.status === 'invited' ? await issueInvitation(user.id, m.id, a.actor, t, now) : null;
    if (inv) audit.push({ entityType: 'invitation', entityId: inv.invitation.id, action: 'create', newValue: { userId: user.id, expiresAt: inv.invitation.expiresAt.toISOString() } });
    await appendAudit(
      t,
      audit.map((r) => ({ ...r, actorUserId: a.actor.userId, actorRole: a.actor.role, studyId: a.study.id, siteId, requestId: a.actor.requestId })),
    );
    return { user, membership: m, inv };
  });
  const roleText = `${ROLE_LABELS[a.role]}${a.siteCode ? ` at ${a.siteCode}` : ''}`;
  let emailSent = true;
  if (out.inv) {
    emailSent = await mailInvitation(email, out.user.name, a.study.title, roleText, out.inv.token);
  } else {
    // An existing, active account gets a notice instead of a link.
    try {
      await sendMail({ to: email, subject: `Excursion: new role in ${a.study.title}`, text: `Hello ${out.user.name},\n\nYou now also hold the role ${roleText} in ${a.study.title}. Sign in as usual.\n` });
    } catch {
      emailSent = false;
    }
  }
  return { userId: out.user.id, membershipId: out.membership.id, emailSent, expiresAt: out.inv?.invitation.expiresAt.toISOString() ?? '' };
}

/** Sends a fresh link to a person who has not set a password yet; older links stop working. */
export async function resendInvitation(a: { study: { id: number; title: string }; userId: number; actor: Actor; now?: Date }) {
  const now = a.now ?? new Date();
  const out = await sequelize.transaction(async (t) => {
    const user = await User.findByPk(a.userId, { transaction: t, lock: t.LOCK.UPDATE });
    if (!user) throw new AppError('not_found', 'The person was not found.');
    const m = await Membership.findOne({ where: { userId: user.id, studyId: a.study.id, revokedAt: { [Op.is]: null } }, transaction: t });
    if (!m) throw new AppError('not_found', 'The person was not found in this study.');
    if (user.status !== 'invited') throw new AppError('conflict', 'This person has already set a password.');
    const inv = await issueInvitation(user.id, m.id, a.actor, t, now);
    await appendAudit(t, [{ actorUserId: a.actor.userId, actorRole: a.actor.role, studyId: a.study.id, entityType: 'invitation', entityId: inv.invitation.id, action: 'create', newValue: { userId: user.id, resent: true }, requestId: a.actor.requestId }]);
    return { user, m, inv };
  });
  const emailSent = await mailInvitation(out.user.email, out.user.name, a.study.title, ROLE_LABELS[out.m.role], out.inv.token);
  return { emailSent, expiresAt: out.inv.invitation.expiresAt.toISOString() };
}

/** Looks up a link without using it: for the set-password page. */
export async function describeInvitation(token: string, now = new Date()): Promise<{ state: 'valid' | 'used' | 'expired' | 'unknown'; email?: string; name?: string }> {
  if (!token || token.length > 100) return { state: 'unknown' };
  const inv = await Invitation.findOne({ where: { tokenHash: tokenHash(token) }, include: [{ model: User, as: 'user' }] });
  if (!inv) return { state: 'unknown' };
  const user = (inv as unknown as { user: User }).user;
  if (inv.usedAt) return { state: 'used' };
  if (inv.expiresAt <= now) return { state: 'expired' };
  return { state: 'valid', email: user.email, name: user.name };
}

/** Uses a link once: sets the password and activates the account. Reused or expired links are refused (410). */
export async function acceptInvitation(a: { token: string; password: string; requestId?: string; now?: Date }): Promise<{ email: string }> {
  const now = a.now ?? new Date();
  const problem = passwordProblem(a.password);
  if (problem) throw new AppError('validation_failed', `The password is not strong enough: ${problem}`, { fields: { password: problem } });
  const hash = await hashPassword(a.password);
  return sequelize.transaction(async (t) => {
    const inv = await Invitation.findOne({ where: { tokenHash: tokenHash(a.token) }, transaction: t, lock: t.LOCK.UPDATE });
    if (!inv) throw new AppError('not_found', 'This link is not valid. Check that you copied all of it, or ask your administrator for a new invitation.');
    if (inv.usedAt) throw new AppError('gone', 'This link has already been used. Sign in with your password, or ask your administrator for a new invitation.');
    if (inv.expiresAt <= now) throw new AppError('gone', 'This link has expired. Ask your administrator for a new invitation.');
    const user = await User.findByPk(inv.userId, { transaction: t, lock: t.LOCK.UPDATE });
    if (!user || user.status === 'deactivated') throw new AppError('forbidden', 'This account is deactivated.');
    await inv.update({ usedAt: now }, { transaction: t });
    await user.update({ passwordHash: hash, status: 'active', failedAttempts: 0, lockedUntil: null }, { transaction: t });
    await appendAudit(t, [
      { actorUserId: user.id, actorRole: null, entityType: 'user', entityId: user.id, action: 'set_password', itemPath: '/status', oldValue: 'invited', newValue: 'active', reason: 'invitation accepted', requestId: a.requestId },
    ]);
    await logAccess({ event: 'invitation_accepted', userId: user.id, email: user.email, requestId: a.requestId }, t);
    return { email: user.email };
  });
}
