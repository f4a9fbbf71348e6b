// POST /api/studies/:study/sites/:site/queries/:query/reopen — the opener or a data manager re-opens it (audited).
import { withAuth, readJson } from '@/lib/http/handler';
import { idParam } from '@/lib/http/params';
import { closeOrReopen } from '@/lib/monitoring/queries';
import { queryTextBody } from '@/lib/schemas';

export const POST = withAuth<{ study: string; site: string; query: string }>(
  async ({ req, params, study, site, principal, roles, requestId }) => {
    const b = await readJson(req, queryTextBody);
    return closeOrReopen({ studyId: study!.id, siteId: site!.id, queryId: idParam(params.query, 'The query'), text: b.text, reopen: true, actor: { userId: principal.id, role: roles.includes('data_manager') ? 'data_manager' : roles[0], requestId } });
  },
  { scope: 'site', roles: ['monitor', 'data_manager'] },
);
