// GET /api/studies/:study/sites/:site/participants/:participant/randomise — what the confirmation step restates
// (eligibility, consent, blockers); POST { confirm: true } — randomise (coordinator of the site).
import { withAuth, readJson } from '@/lib/http/handler';
import { idParam } from '@/lib/http/params';
import { randomiseBody } from '@/lib/schemas';
import { randomisationReadiness, randomiseParticipant } from '@/lib/allocation';

type P = { study: string; site: string; participant: string };

export const GET = withAuth<P>(
  async ({ params, study, site }) => randomisationReadiness(study!.id, site!.id, idParam(params.participant, 'The participant')),
  { scope: 'site', roles: ['coordinator'] },
);

export const POST = withAuth<P>(
  async ({ req, params, study, site, principal, requestId }) => {
    await readJson(req, randomiseBody);
    return randomiseParticipant({ study: study!, site: site!, participantId: idParam(params.participant, 'The participant'), actor: { userId: principal.id, role: 'coordinator', requestId } });
  },
  { scope: 'site', roles: ['coordinator'] },
);
