// POST /api/studies/:study/sites/:site/participants/:participant/verify — a monitor marks an item ('' = whole form) verified.
import { withAuth, readJson } from '@/lib/http/handler';
import { verifyItem } from '@/lib/monitoring/verification';
import { verifyBody } from '@/lib/schemas';

export const POST = withAuth(
  async ({ req, study, site, principal, requestId }) => {
    const b = await readJson(req, verifyBody);
    return verifyItem({ studyId: study!.id, siteId: site!.id, recordId: b.recordId, itemPath: b.itemPath, actor: { userId: principal.id, role: 'monitor', requestId } });
  },
  { scope: 'site', roles: ['monitor'] },
);
