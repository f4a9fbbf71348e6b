// POST /api/studies/:study/sites/:site/participants/:participant/uploads — upload the signed consent form
// (the body is the file itself; PDF, PNG or JPEG by content, at most 10 MB). Coordinator of the site.
import { withAuth } from '@/lib/http/handler';
import { idParam } from '@/lib/http/params';
import { AppError } from '@/lib/errors';
import { MAX_UPLOAD_BYTES, storeConsentUpload } from '@/lib/uploads';

async function readBytes(req: Request): Promise<Buffer> {
  const declared = Number(req.headers.get('content-length') ?? NaN);
  if (Number.isFinite(declared) && declared > MAX_UPLOAD_BYTES) throw new AppError('payload_too_large', 'The file is larger than 10 MB.');
  if (!req.body) return Buffer.alloc(0);
  const reader = req.body.getReader();
  const chunks: Uint8Array[] = [];
  let size = 0;
  for (;;) {
    const { done, value } = await reader.read();
    if (done) break;
    size += value.byteLength;
    if (size > MAX_UPLOAD_BYTES) {
      await reader.cancel();
      throw new AppError('payload_too_large', 'The file is larger than 10 MB.');
    }
    chunks.push(value);
  }
  return Buffer.concat(chunks);
}

export const POST = withAuth<{ study: string; site: string; participant: string }>(
  async ({ req, params, study, site, principal, requestId }) =>
    storeConsentUpload({ studyId: study!.id, siteId: site!.id, participantId: idParam(params.participant, 'The participant'), bytes: await readBytes(req), actor: { userId: principal.id, role: 'coordinator', requestId } }),
  { scope: 'site', roles: ['coordinator'] },
);
