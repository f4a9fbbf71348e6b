// GET /api/health — liveness and database reachability (no authentication, no data).
import { withPublic } from '@/lib/http/handler';
import { checkDatabase } from '@/lib/health';

export const GET = withPublic(async () => {
  await checkDatabase();
  return { ok: true, db: 'up' };
});
