import 'server-only';
import { Op } from 'sequelize';
import { AccessLog, User, sequelize } from '@/models';
import { logAccess } from '@/lib/access-log';
import { checkPassword, dummyHash } from './password';

export const LOCKOUT_THRESHOLD = 5;
export const LOCKOUT_MINUTES = 15;

/** Per client address: this many failed sign-ins (any accounts, known or not) within the window… */
export const IP_FAILURE_LIMIT = 30;
/** …refuse further attempts from that address until the oldest of them is this many minutes old. */
export const IP_WINDOW_MINUTES = 15;

export type RateDecision = { ok: true } | { ok: false; retryAfterSeconds: number; message: string };

/**
 * Sign-in rate limit per client address, on top of the per-account lockout: counts the address's failed sign-ins
 * in the access log (so every app server sees the same count) and refuses when the limit is reached, before any
 * password is checked. A refusal is itself written to the access log as `signin_rate_limited`; refusals do not
 * count as failures, so the address is let in again once its failures age out of the window.
 */
export async function checkSignInRate(a: { ip: string | null; email?: string | null; userAgent?: string | null; requestId?: string; now?: Date }): Promise<RateDecision> {
  if (!a.ip) return { ok: true };
  const now = a.now ?? new Date();
  const windowMs = IP_WINDOW_MINUTES * 60_000;
  const recent = await AccessLog.findAll({
    attributes: ['at'],
    where: { event: 'signin_failure', ip: a.ip, at: { [Op.gt]: new Date(now.getTime() - windowMs) } },
    order: [['at', 'DESC']],
    limit: IP_FAILURE_LIMIT,
  });
  if (recent.length < IP_FAILURE_LIMIT) return { ok: true };
  const retryAfterSeconds = Math.max(1, Math.ceil((recent[recent.length - 1].at.getTime() + windowMs - now.getTime()) / 1000));
  const minutes = Math.ceil(retryAfterSeconds / 60);
  await logAccess({
    event: 'signin_rate_limited', ip: a.ip, email: a.email?.trim().toLowerCase().slice(0, 254) || null, userAgent: a.userAgent ?? null, requestId: a.requestId ?? null,
    detail: { failures: recent.length, windowMinutes: IP_WINDOW_MINUTES, retryAfterSeconds },
  });
  return {
    ok: false,
    retryAfterSeconds,
    message: `Too many failed sign-ins from your network address (${IP_FAILURE_LIMIT} within ${IP_WINDOW_MINUTES} minutes). Wait ${minutes} minute${minutes === 1 ? '' : 's'} and try again, or ask your administrator.`,
  };
}

export type SignInResult = { ok: true; userId: number } | { ok: false; reason: 'invalid' | 'locked' };

/**
 * Checks e-mail and password, counts failures, locks the account for 15 minutes after 5 failures in a row,
 * and records every outcome in the access log. Unknown and inactive accounts answer like a wrong password.
 */
export async function attemptSignIn(a: { email: string; password: string; ip?: string | null; userAgent?: string | null; now?: Date }): Promise<SignInResult> {
  const now = a.now ?? new Date();
  const email = a.email.trim().toLowerCase();
  const meta = { email, ip: a.ip ?? null, userAgent: a.userAgent ?? null };
  return sequelize.transaction(async (t) => {
    const user = await User.findOne({ where: { email }, transaction: t, lock: t.LOCK.UPDATE });
    if (!user || !user.passwordHash || user.status !== 'active') {
      await checkPassword(a.password, dummyHash());
      await logAccess({ ...meta, event: 'signin_failure', userId: user?.id ?? null, detail: { reason: user ? `account ${user.status}` : 'unknown account' } }, t);
      return { ok: false, reason: 'invalid' } as const;
    }
    if (user.lockedUntil && user.lockedUntil > now) {
      await logAccess({ ...meta, event: 'signin_refused_locked', userId: user.id, detail: { lockedUntil: user.lockedUntil.toISOString() } }, t);
      return { ok: false, reason: 'locked' } as const;
    }
    // A lock whose window has passed starts a fresh count.
    const prior = user.lockedUntil ? 0 : user.failedAttempts;
    if (!(await checkPassword(a.password, user.passwordHash))) {
      const failures = prior + 1;
      const lock = failures >= LOCKOUT_THRESHOLD;
      await user.update(
        { failedAttempts: lock ? 0 : failures, lockedUntil: lock ? new Date(now.getTime() + LOCKOUT_MINUTES * 60_000) : null },
        { transaction: t },
      );
      await logAccess({ ...meta, event: 'signin_failure', userId: user.id, detail: { reason: 'wrong password', failures } }, t);
      if (lock) {
        await logAccess({ ...meta, event: 'lockout', userId: user.id, detail: { minutes: LOCKOUT_MINUTES } }, t);
        return { ok: false, reason: 'locked' } as const;
      }
      return { ok: false, reason: 'invalid' } as const;
    }
    await user.update({ failedAttempts: 0, lockedUntil: null, lastLoginAt: now }, { transaction: t });
    await logAccess({ ...meta, event: 'signin_success', userId: user.id }, t);
    return { ok: true, userId: user.id } as const;
  });
}
