// GET /api/studies/:study/snapshots/:snapshot/export?format=xlsx|csv|odm&profile=full|deidentified — streams an export
// of the snapshot as a download (statistician, data manager); every download is written to the access log.
import { Readable } from 'node:stream';
import { NextResponse } from 'next/server';
import { withAuth } from '@/lib/http/handler';
import { SNAPSHOT_READ_ROLES } from '@/lib/snapshot/detail';
import { openExport } from '@/lib/snapshot/detail';

export const GET = withAuth<{ study: string; snapshot: string }>(
  async ({ req, study, params, principal, requestId }) => {
    const sp = req.nextUrl.searchParams;
    const f = await openExport({
      studyId: study!.id, studyCode: study!.code, snapshotId: Number(params.snapshot), query: Object.fromEntries(sp.entries()),
      userId: principal.id, email: principal.email, ip: req.headers.get('x-forwarded-for'), userAgent: req.headers.get('user-agent'), requestId,
    });
    return new NextResponse(Readable.toWeb(f.stream) as ReadableStream, {
      headers: {
        'content-type': f.contentType, 'content-disposition': `attachment; filename="${f.filename}"`, 'cache-control': 'no-store', 'x-content-type-options': 'nosniff',
        'x-snapshot-hash': f.snapshotHash, 'x-request-id': requestId,
      },
    });
  },
  { scope: 'study', roles: SNAPSHOT_READ_ROLES },
);
