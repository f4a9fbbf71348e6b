// POST /api/studies/:study/sites/:site/participants/:participant/unblind — emergency unblinding with a reason
// (investigator, or the roles the study allows); audited, registered, data managers e-mailed.
import { withAuth, readJson } from '@/lib/http/handler';
import { idParam } from '@/lib/http/params';
import { unblindBody } from '@/lib/schemas';
import { emergencyUnblind } from '@/lib/allocation';
import { ROLES } from '@/lib/roles';

export const POST = withAuth<{ study: string; site: string; participant: string }>(
  async ({ req, params, study, site, principal, roles, requestId }) => {
    const { reason } = await readJson(req, unblindBody);
    const allowed = (study!.config.unblindingRoles as string[] | undefined) ?? ['investigator'];
    const role = roles.find((r) => allowed.includes(r)) ?? roles[0];
    return emergencyUnblind({ study: study!, site: site!, participantId: idParam(params.participant, 'The participant'), reason, actor: { userId: principal.id, role, requestId } });
  },
  { scope: 'site', roles: ROLES.filter((r) => r !== 'assessor'), lock: 'admin' },
);
