// POST /api/studies/:study/sites/:site/participants/:participant/uploads — upload the signed consent form
// (the body is the file itself; PDF, PNG or JPEG by content, at most 10 MB). Coordinator of the site.
import { withAuth, readBytes } from '@/lib/http/handler';
import { idParam } from '@/lib/http/params';
import { MAX_UPLOAD_BYTES, storeConsentUpload } from '@/lib/uploads';

export const POST = withAuth<{ study: string; site: string; participant: string }>(
  async ({ req, params, study, site, principal, requestId }) =>
    storeConsentUpload({ studyId: study!.id, siteId: site!.id, participantId: idParam(params.participant, 'The participant'), bytes: await readBytes(req, MAX_UPLOAD_BYTES, 'The file is larger than 10 MB.'), actor: { userId: principal.id, role: 'coordinator', requestId } }),
  { scope: 'site', roles: ['coordinator'] },
);
