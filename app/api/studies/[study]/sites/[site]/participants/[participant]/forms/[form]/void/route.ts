// POST /api/studies/:study/sites/:site/participants/:participant/forms/:form/void?visit=&instance= — void a record entered in error.
import { withAuth, readJson } from '@/lib/http/handler';
import { formKeyParam, idParam, slotParams } from '@/lib/http/params';
import { readRecord, voidRecord } from '@/lib/crf/records';
import { crfVoidBody } from '@/lib/schemas';
import { notFound } from '@/lib/errors';

export const POST = withAuth<{ study: string; site: string; participant: string; form: string }>(
  async ({ req, params, study, site, roles, principal, requestId }) => {
    const b = await readJson(req, crfVoidBody);
    const r = await readRecord({ study: study!, siteId: site!.id, participantId: idParam(params.participant, 'The participant'), formKey: formKeyParam(params.form), ...slotParams(req.nextUrl.searchParams), roles });
    if (!r.record) throw notFound('The record');
    return voidRecord({ studyId: study!.id, siteId: site!.id, recordId: r.record.id, reason: b.reason, baseVersion: b.baseVersion, actor: { userId: principal.id, roles, requestId } });
  },
  { scope: 'site', roles: ['coordinator', 'therapist', 'assessor', 'investigator', 'data_manager'] },
);
