// GET /api/studies/:study/lock/readiness[?site=CODE] — what blocks a hard lock, with counts and participant codes.
import { withAuth } from '@/lib/http/handler';
import { lockScopeSite, readinessCheck } from '@/lib/lock';

export const GET = withAuth(
  async ({ req, study }) => {
    const code = req.nextUrl.searchParams.get('site');
    const siteId = await lockScopeSite(study!.id, code);
    return { site: code || null, ...(await readinessCheck(study!.id, siteId)) };
  },
  { scope: 'study', roles: ['data_manager', 'admin'] },
);
