// GET /api/studies/:study/dashboard — recruitment, funnel, projection, completeness, queries, safety and CONSORT flow
// for the investigator's sites (pooled over arms unless the study allows arm-level monitoring).
import { withAuth } from '@/lib/http/handler';
import { sitesFor } from '@/lib/auth/principal';
import { dashboard } from '@/lib/monitoring/dashboard';

export const GET = withAuth(
  async ({ study, principal, roles }) => dashboard(study!, sitesFor(principal, study!.id, ['investigator', 'data_manager', 'monitor']), roles),
  { scope: 'study', roles: ['investigator', 'data_manager', 'monitor'] },
);
