// GET /api/studies/:study/snapshots — the study's snapshots (statistician, data manager).
// POST /api/studies/:study/snapshots — take the snapshot again (data manager), only under the study's hard lock (the lock takes one itself).
import { withAuth, readJson } from '@/lib/http/handler';
import { emptyBody } from '@/lib/schemas';
import { createSnapshot, listSnapshots, SNAPSHOT_CREATE_ROLES, SNAPSHOT_READ_ROLES } from '@/lib/snapshot';

export const GET = withAuth(async ({ study }) => ({ snapshots: await listSnapshots(study!.id) }), { scope: 'study', roles: SNAPSHOT_READ_ROLES });

export const POST = withAuth(
  async ({ req, study, principal, requestId }) => {
    await readJson(req, emptyBody);
    return createSnapshot({ studyId: study!.id, actor: { userId: principal.id, role: 'data_manager', requestId } });
  },
  // A snapshot is taken under the hard lock, so the lock gate would refuse it; createSnapshot checks the lock itself.
  { scope: 'study', roles: SNAPSHOT_CREATE_ROLES, lock: 'none' },
);
