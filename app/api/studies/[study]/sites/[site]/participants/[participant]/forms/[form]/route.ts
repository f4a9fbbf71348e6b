// GET /api/studies/:study/sites/:site/participants/:participant/forms/:form?visit=&instance= — definition (the record's
// own version) and record; PUT — save as draft or submit (validated on the server, audited per item, 409 when stale).
import { withAuth, readJson } from '@/lib/http/handler';
import { formKeyParam, idParam, slotParams } from '@/lib/http/params';
import { readRecord, saveRecord } from '@/lib/crf/records';
import { crfSaveBody } from '@/lib/schemas';
import { todayIn } from '@/lib/dates';

type P = { study: string; site: string; participant: string; form: string };
const ROLES = ['coordinator', 'therapist', 'assessor', 'investigator', 'monitor', 'data_manager'] as const;

export const GET = withAuth<P>(
  async ({ req, params, study, site, roles }) =>
    readRecord({ study: study!, siteId: site!.id, participantId: idParam(params.participant, 'The participant'), formKey: formKeyParam(params.form), ...slotParams(req.nextUrl.searchParams), roles }),
  { scope: 'site', roles: ROLES },
);

export const PUT = withAuth<P>(
  async ({ req, params, study, site, roles, principal, requestId }) => {
    const slot = slotParams(req.nextUrl.searchParams);
    const participantId = idParam(params.participant, 'The participant');
    const formKey = formKeyParam(params.form);
    const b = await readJson(req, crfSaveBody, { maxBytes: 256 * 1024 });
    return saveRecord({
      study: study!, siteId: site!.id, participantId, formKey, ...slot, data: b.data, intent: b.intent, baseVersion: b.baseVersion, reason: b.reason,
      actor: { userId: principal.id, roles, requestId }, today: todayIn(site!.timeZone),
    });
  },
  { scope: 'site', roles: ['coordinator', 'therapist', 'assessor', 'investigator'] },
);
