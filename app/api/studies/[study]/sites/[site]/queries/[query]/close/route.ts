// POST /api/studies/:study/sites/:site/queries/:query/close — the opener or a data manager closes the query (audited).
import { withAuth, readJson } from '@/lib/http/handler';
import { idParam } from '@/lib/http/params';
import { closeOrReopen } from '@/lib/monitoring/queries';
import { queryCloseBody } from '@/lib/schemas';

export const POST = withAuth<{ study: string; site: string; query: string }>(
  async ({ req, params, study, site, principal, roles, requestId }) => {
    const b = await readJson(req, queryCloseBody);
    return closeOrReopen({ studyId: study!.id, siteId: site!.id, queryId: idParam(params.query, 'The query'), text: b.text ?? '', reopen: false, actor: { userId: principal.id, role: roles.includes('data_manager') ? 'data_manager' : roles[0], requestId } });
  },
  { scope: 'site', roles: ['monitor', 'data_manager'], lock: 'query' },
);
