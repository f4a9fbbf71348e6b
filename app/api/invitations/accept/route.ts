// POST /api/invitations/accept — use a one-time link to set a password (public; the token is the credential).
import { withPublic, readJson } from '@/lib/http/handler';
import { acceptInvitation } from '@/lib/users/invitations';
import { acceptInvitationBody } from '@/lib/schemas';

export const POST = withPublic(async ({ req, requestId }) => {
  const b = await readJson(req, acceptInvitationBody, { maxBytes: 4096 });
  return acceptInvitation({ token: b.token, password: b.password, requestId });
});
