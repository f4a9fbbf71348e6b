// GET /api/studies/:study/sites/:site/participants/:participant/adherence — prescribed vs logged therapy sessions per
// post-operative week, from the arm's programme (unblinded roles only).
import { withAuth } from '@/lib/http/handler';
import { idParam } from '@/lib/http/params';
import { getParticipant } from '@/lib/participants';
import { participantAdherence } from '@/lib/therapy/participant';
import { todayIn } from '@/lib/dates';

export const GET = withAuth<{ study: string; site: string; participant: string }>(
  async ({ params, study, site, roles }) => {
    const p = await getParticipant(study!.id, site!.id, idParam(params.participant, 'The participant'));
    return participantAdherence({ study: study!, participantId: p.id, roles, today: todayIn(site!.timeZone) });
  },
  { scope: 'site', roles: ['coordinator', 'therapist', 'investigator', 'data_manager'] },
);
