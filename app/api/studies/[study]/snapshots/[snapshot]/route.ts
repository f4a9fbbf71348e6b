// GET /api/studies/:study/snapshots/:snapshot — the snapshot, its stored manifest and the commitment check
// (statistician, data manager).
import { withAuth } from '@/lib/http/handler';
import { snapshotDetail, SNAPSHOT_READ_ROLES } from '@/lib/snapshot/detail';

export const GET = withAuth<{ study: string; snapshot: string }>(
  async ({ study, params }) => snapshotDetail(study!.id, Number(params.snapshot)),
  { scope: 'study', roles: SNAPSHOT_READ_ROLES },
);
