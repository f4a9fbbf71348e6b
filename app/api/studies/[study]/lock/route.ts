// GET /api/studies/:study/lock — lock state of the study and its sites, unlock requests and history (data manager, admin).
// POST /api/studies/:study/lock — soft- or hard-lock the study or one site (data manager).
import { withAuth, readJson } from '@/lib/http/handler';
import { lockOverview, lockScopeSite, setLock } from '@/lib/lock';
import { lockBody } from '@/lib/schemas';

export const GET = withAuth(async ({ study }) => lockOverview(study!.id), { scope: 'study', roles: ['data_manager', 'admin'] });

export const POST = withAuth(
  async ({ req, study, principal, requestId }) => {
    const b = await readJson(req, lockBody);
    const siteId = await lockScopeSite(study!.id, b.siteCode);
    return setLock({ studyId: study!.id, siteId, level: b.level, override: b.override, reason: b.reason, actor: { userId: principal.id, role: 'data_manager', requestId } });
  },
  // The lock routes must stay usable under any lock; they check the lock themselves.
  { scope: 'study', roles: ['data_manager'], lock: 'none' },
);
