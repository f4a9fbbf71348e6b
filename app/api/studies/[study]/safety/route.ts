// GET /api/studies/:study/safety — serious adverse events with their 24-hour deadline (investigator, data manager, monitor).
import { withAuth } from '@/lib/http/handler';
import { sitesFor } from '@/lib/auth/principal';
import { saeList } from '@/lib/monitoring/safety';

export const GET = withAuth(
  async ({ study, principal }) => ({ rows: await saeList(study!.id, sitesFor(principal, study!.id, ['investigator', 'data_manager', 'monitor'])) }),
  { scope: 'study', roles: ['investigator', 'data_manager', 'monitor'] },
);
