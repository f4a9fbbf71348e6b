// GET /api/studies/:study/report — the trial report tables by arm (statistician, data manager; refused for blinded roles).
import { withAuth } from '@/lib/http/handler';
import { REPORT_ROLES, trialReport } from '@/lib/report';

export const GET = withAuth(
  async ({ study, roles, principal, requestId }) => trialReport(study!, roles, { userId: principal.id, requestId }),
  { scope: 'study', roles: REPORT_ROLES },
);
