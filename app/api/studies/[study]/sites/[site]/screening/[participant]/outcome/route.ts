// POST /api/studies/:study/sites/:site/screening/:participant/outcome — record "declined" or "other" with a reason (coordinator).
import { withAuth, readJson } from '@/lib/http/handler';
import { idParam } from '@/lib/http/params';
import { setScreeningOutcome } from '@/lib/screening';
import { screeningOutcomeBody } from '@/lib/schemas';

export const POST = withAuth<{ study: string; site: string; participant: string }>(
  async ({ req, params, study, site, principal, requestId }) => {
    const b = await readJson(req, screeningOutcomeBody);
    return setScreeningOutcome({ studyId: study!.id, siteId: site!.id, participantId: idParam(params.participant, 'The participant'), outcome: b.outcome, reason: b.reason, actor: { userId: principal.id, role: 'coordinator', requestId } });
  },
  { scope: 'site', roles: ['coordinator'] },
);
