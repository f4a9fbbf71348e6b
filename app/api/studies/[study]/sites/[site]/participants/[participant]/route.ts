// GET /api/studies/:study/sites/:site/participants/:participant — the casebook: participant, forms the reader may see, records.
import { withAuth } from '@/lib/http/handler';
import { idParam } from '@/lib/http/params';
import { getParticipant } from '@/lib/participants';
import { casebook } from '@/lib/crf/casebook';

export const GET = withAuth<{ study: string; site: string; participant: string }>(
  async ({ params, study, site, roles }) => {
    const p = await getParticipant(study!.id, site!.id, idParam(params.participant, 'The participant'));
    return { participant: p, ...(await casebook(study!, p.id, roles)) };
  },
  { scope: 'site', roles: ['coordinator', 'therapist', 'assessor', 'investigator', 'monitor', 'data_manager'] },
);
