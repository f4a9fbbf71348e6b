// DELETE /api/studies/:study/memberships/:membershipId — revoke a role (kept, marked revoked; admin, with a reason).
import { withAuth, readJson } from '@/lib/http/handler';
import { revokeMembership } from '@/lib/users/admin';
import { reasonBody } from '@/lib/schemas';
import { notFound } from '@/lib/errors';

export const DELETE = withAuth<{ study: string; membershipId: string }>(
  async ({ req, params, study, principal, requestId }) => {
    const membershipId = Number(params.membershipId);
    if (!Number.isInteger(membershipId) || membershipId <= 0) throw notFound('The membership');
    const { reason } = await readJson(req, reasonBody);
    return revokeMembership({ studyId: study!.id, membershipId, reason, actor: { userId: principal.id, role: 'admin', requestId } });
  },
  { scope: 'study', roles: ['admin'], lock: 'admin' },
);
