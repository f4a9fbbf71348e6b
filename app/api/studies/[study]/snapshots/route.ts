// GET /api/studies/:study/snapshots — the study's snapshots (statistician, data manager).
// POST /api/studies/:study/snapshots — take a snapshot now (data manager); the hard lock may later be the only caller.
import { withAuth, readJson } from '@/lib/http/handler';
import { emptyBody } from '@/lib/schemas';
import { createSnapshot, listSnapshots, SNAPSHOT_CREATE_ROLES, SNAPSHOT_READ_ROLES } from '@/lib/snapshot';

export const GET = withAuth(async ({ study }) => ({ snapshots: await listSnapshots(study!.id) }), { scope: 'study', roles: SNAPSHOT_READ_ROLES });

export const POST = withAuth(
  async ({ req, study, principal, requestId }) => {
    await readJson(req, emptyBody);
    return createSnapshot({ studyId: study!.id, actor: { userId: principal.id, role: 'data_manager', requestId } });
  },
  { scope: 'study', roles: SNAPSHOT_CREATE_ROLES },
);
