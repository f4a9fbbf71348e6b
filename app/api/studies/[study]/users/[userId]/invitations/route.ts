// POST /api/studies/:study/users/:userId/invitations — send a fresh set-password link (admin).
import { withAuth, readJson } from '@/lib/http/handler';
import { resendInvitation } from '@/lib/users/invitations';
import { emptyBody } from '@/lib/schemas';
import { notFound } from '@/lib/errors';

export const POST = withAuth<{ study: string; userId: string }>(
  async ({ req, params, study, principal, requestId }) => {
    const userId = Number(params.userId);
    if (!Number.isInteger(userId) || userId <= 0) throw notFound('The person');
    await readJson(req, emptyBody);
    return resendInvitation({ study: study!, userId, actor: { userId: principal.id, role: 'admin', requestId } });
  },
  { scope: 'study', roles: ['admin'], lock: 'admin' },
);
