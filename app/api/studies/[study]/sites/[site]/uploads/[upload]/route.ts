// GET /api/studies/:study/sites/:site/uploads/:upload — download a signed consent form (site staff, data managers,
// monitors); every download is written to the access log.
import { NextResponse } from 'next/server';
import { withAuth } from '@/lib/http/handler';
import { DOWNLOAD_ROLES, downloadUpload } from '@/lib/uploads';
import { clientAddress } from '@/lib/http/client-address';

export const GET = withAuth<{ study: string; site: string; upload: string }>(
  async ({ req, params, study, site, principal, requestId }) => {
    const f = await downloadUpload({ studyId: study!.id, siteId: site!.id, publicId: String(params.upload), userId: principal.id, ip: clientAddress(req.headers), requestId });
    return new NextResponse(new Uint8Array(f.bytes), {
      headers: { 'content-type': f.mime, 'content-disposition': `attachment; filename="${f.filename}"`, 'cache-control': 'no-store', 'x-content-type-options': 'nosniff' },
    });
  },
  { scope: 'site', roles: DOWNLOAD_ROLES },
);
