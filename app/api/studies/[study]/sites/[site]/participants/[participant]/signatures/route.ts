// GET /api/studies/:study/sites/:site/participants/:participant/signatures — signatures of the casebook with their status;
// POST { password, confirm } — the investigator signs the casebook (password re-entered).
import { withAuth, readJson } from '@/lib/http/handler';
import { idParam } from '@/lib/http/params';
import { getParticipant } from '@/lib/participants';
import { signCasebook, signaturesOf } from '@/lib/monitoring/verification';
import { signBody } from '@/lib/schemas';

type P = { study: string; site: string; participant: string };

export const GET = withAuth<P>(
  async ({ params, study, site }) => ({ rows: await signaturesOf((await getParticipant(study!.id, site!.id, idParam(params.participant, 'The participant'))).id) }),
  { scope: 'site', roles: ['coordinator', 'therapist', 'assessor', 'investigator', 'monitor', 'data_manager'] },
);

export const POST = withAuth<P>(
  async ({ req, params, study, site, principal, requestId }) => {
    const b = await readJson(req, signBody);
    const p = await getParticipant(study!.id, site!.id, idParam(params.participant, 'The participant'));
    return signCasebook({ studyId: study!.id, siteId: site!.id, participantId: p.id, password: b.password, actor: { userId: principal.id, role: 'investigator', requestId } });
  },
  { scope: 'site', roles: ['investigator'] },
);
