// POST /api/studies/:study/randomisation/activate — generate and store the allocation schedule once; answers the
// commitment (data manager).
import { withAuth, readJson } from '@/lib/http/handler';
import { activateRandomisation } from '@/lib/allocation';
import { emptyBody } from '@/lib/schemas';

export const POST = withAuth(
  async ({ req, study, principal, requestId }) => {
    await readJson(req, emptyBody);
    return activateRandomisation({ study: study!, actor: { userId: principal.id, role: 'data_manager', requestId } });
  },
  { scope: 'study', roles: ['data_manager'] },
);
