import 'server-only';
import type { Transaction } from 'sequelize';
import { AccessLog } from '@/models';

/** Events recorded in the access log. */
export type AccessEvent =
  | 'signin_success'
  | 'signin_failure'
  | 'signin_refused_locked'
  | 'lockout'
  | 'signin_rate_limited'
  | 'signout'
  | 'invitation_accepted'
  | 'download'
  | 'export';

/** Appends one access-log row (the table is append-only for the application user). */
export async function logAccess(
  e: { event: AccessEvent; userId?: number | null; email?: string | null; ip?: string | null; userAgent?: string | null; requestId?: string | null; detail?: Record<string, unknown> | null },
  t?: Transaction,
): Promise<void> {
  await AccessLog.create(
    {
      event: e.event,
      userId: e.userId ?? null,
      email: e.email ?? null,
      ip: e.ip?.slice(0, 64) ?? null,
      userAgent: e.userAgent?.slice(0, 300) ?? null,
      requestId: e.requestId ?? null,
      detail: e.detail ?? null,
    },
    { transaction: t },
  );
}
