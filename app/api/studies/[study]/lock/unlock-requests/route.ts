// POST /api/studies/:study/lock/unlock-requests — a data manager asks for a lock to be lowered by one level.
import { withAuth, readJson } from '@/lib/http/handler';
import { lockScopeSite, requestUnlock } from '@/lib/lock';
import { unlockRequestBody } from '@/lib/schemas';

export const POST = withAuth(
  async ({ req, study, principal, requestId }) => {
    const b = await readJson(req, unlockRequestBody);
    const siteId = await lockScopeSite(study!.id, b.siteCode);
    return requestUnlock({ studyId: study!.id, siteId, reason: b.reason, actor: { userId: principal.id, role: 'data_manager', requestId } });
  },
  { scope: 'study', roles: ['data_manager'], lock: 'none' },
);
