// GET /api/health — liveness and database reachability (no authentication, no data).
import { withPublic } from '@/lib/http/handler';
import { sequelize } from '@/models';

export const GET = withPublic(async () => {
  await sequelize.query('SELECT 1');
  return { ok: true, db: 'up' };
});
