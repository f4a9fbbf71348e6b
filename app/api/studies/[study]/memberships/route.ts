// POST /api/studies/:study/memberships — give a member another role (admin).
import { withAuth, readJson } from '@/lib/http/handler';
import { addMembership } from '@/lib/users/admin';
import { membershipBody } from '@/lib/schemas';

export const POST = withAuth(
  async ({ req, study, principal, requestId }) => {
    const b = await readJson(req, membershipBody);
    return addMembership({ studyId: study!.id, userId: b.userId, role: b.role, siteCode: b.site, actor: { userId: principal.id, role: 'admin', requestId } });
  },
  { scope: 'study', roles: ['admin'], lock: 'admin' },
);
