import 'server-only';
import { User, sequelize } from '@/models';
import { logAccess } from '@/lib/access-log';
import { checkPassword, dummyHash } from './password';

export const LOCKOUT_THRESHOLD = 5;
export const LOCKOUT_MINUTES = 15;

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
