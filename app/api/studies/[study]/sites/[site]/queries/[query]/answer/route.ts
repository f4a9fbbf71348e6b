// POST /api/studies/:study/sites/:site/queries/:query/answer — site staff answer an open query (audited).
import { withAuth, readJson } from '@/lib/http/handler';
import { idParam } from '@/lib/http/params';
import { answerQuery } from '@/lib/monitoring/queries';
import { queryTextBody } from '@/lib/schemas';

export const POST = withAuth<{ study: string; site: string; query: string }>(
  async ({ req, params, study, site, principal, roles, requestId }) => {
    const b = await readJson(req, queryTextBody);
    return answerQuery({ studyId: study!.id, siteId: site!.id, queryId: idParam(params.query, 'The query'), text: b.text, actor: { userId: principal.id, role: roles[0], requestId } });
  },
  { scope: 'site', roles: ['coordinator', 'therapist', 'assessor', 'investigator'], lock: 'query' },
);
