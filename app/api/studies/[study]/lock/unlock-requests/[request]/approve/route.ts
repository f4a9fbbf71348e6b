// POST /api/studies/:study/lock/unlock-requests/:request/approve — a different data manager approves the unlock.
import { withAuth, readJson } from '@/lib/http/handler';
import { idParam } from '@/lib/http/params';
import { approveUnlock } from '@/lib/lock';
import { unlockApproveBody } from '@/lib/schemas';

export const POST = withAuth<{ study: string; request: string }>(
  async ({ req, params, study, principal, requestId }) => {
    await readJson(req, unlockApproveBody);
    return approveUnlock({ studyId: study!.id, requestId: idParam(params.request, 'The unlock request'), actor: { userId: principal.id, role: 'data_manager', requestId } });
  },
  { scope: 'study', roles: ['data_manager'], lock: 'none' },
);
