// GET /api/studies/:study/sites/:site/screening — the site's screening log (?outcome= &sort= &dir= &page=);
// POST — record a screened patient (coordinator): screening number, date, age, sex; no names or hospital numbers.
import { withAuth, readJson, paging } from '@/lib/http/handler';
import { recordScreening, screeningLog } from '@/lib/screening';
import { screeningCreateBody } from '@/lib/schemas';

export const GET = withAuth(
  async ({ req, study, site }) => {
    const p = paging(req, { pageSize: 25 });
    const sp = req.nextUrl.searchParams;
    return { ...(await screeningLog({ studyId: study!.id, siteId: site!.id, ...p, outcome: sp.get('outcome') || undefined, sort: sp.get('sort') || undefined, dir: sp.get('dir') || undefined })), page: p.page, pageSize: p.pageSize };
  },
  { scope: 'site', roles: ['coordinator', 'investigator', 'monitor', 'data_manager'] },
);

export const POST = withAuth(
  async ({ req, study, site, principal, requestId }) => {
    const b = await readJson(req, screeningCreateBody);
    return recordScreening({ studyId: study!.id, siteId: site!.id, ...b, actor: { userId: principal.id, role: 'coordinator', requestId } });
  },
  { scope: 'site', roles: ['coordinator'] },
);
