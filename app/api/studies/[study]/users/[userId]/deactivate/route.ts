// POST /api/studies/:study/users/:userId/deactivate — the account can no longer sign in (admin, with a reason).
import { withAuth, readJson } from '@/lib/http/handler';
import { deactivateUser } from '@/lib/users/admin';
import { reasonBody } from '@/lib/schemas';
import { notFound } from '@/lib/errors';

export const POST = withAuth<{ study: string; userId: string }>(
  async ({ req, params, study, principal, requestId }) => {
    const userId = Number(params.userId);
    if (!Number.isInteger(userId) || userId <= 0) throw notFound('The person');
    const { reason } = await readJson(req, reasonBody);
    return deactivateUser({ studyId: study!.id, userId, reason, actor: { userId: principal.id, role: 'admin', requestId } });
  },
  { scope: 'study', roles: ['admin'], lock: 'admin' },
);
