// POST /api/studies/:study/invitations — invite a person to a role (admin); e-mails a one-time link.
import { withAuth, readJson } from '@/lib/http/handler';
import { inviteUser } from '@/lib/users/invitations';
import { inviteBody } from '@/lib/schemas';

export const POST = withAuth(
  async ({ req, study, principal, requestId }) => {
    const b = await readJson(req, inviteBody);
    return inviteUser({ study: study!, email: b.email, name: b.name, role: b.role, siteCode: b.site, actor: { userId: principal.id, role: 'admin', requestId } });
  },
  { scope: 'study', roles: ['admin'], lock: 'admin' },
);
