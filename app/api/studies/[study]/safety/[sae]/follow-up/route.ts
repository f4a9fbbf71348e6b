// POST /api/studies/:study/safety/:sae/follow-up — the investigator records an SAE's follow-up, which stops its 24-hour clock.
import { withAuth, readJson } from '@/lib/http/handler';
import { sitesFor } from '@/lib/auth/principal';
import { saeFollowUpBody } from '@/lib/schemas';
import { recordSaeFollowUp } from '@/lib/monitoring/safety';
import { idParam } from '@/lib/http/params';

export const POST = withAuth(
  async ({ req, params, study, principal, requestId }) => {
    const body = await readJson(req, saeFollowUpBody);
    return recordSaeFollowUp({
      studyId: study!.id, saeId: idParam(params.sae, 'SAE'), siteIds: sitesFor(principal, study!.id, ['investigator']), note: body.note,
      actor: { userId: principal.id, role: 'investigator', requestId },
    });
  },
  { scope: 'study', roles: ['investigator'], lock: 'query' },
);
