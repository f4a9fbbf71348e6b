// GET /api/studies/:study/sites/:site/queries — the site's data queries (?state= &form= &minAge= days), with counts;
// POST — open a query on an item (monitor, data manager); the site's coordinators are e-mailed.
import { withAuth, readJson, paging } from '@/lib/http/handler';
import { listQueries, openQuery } from '@/lib/monitoring/queries';
import { visibleFormKeys } from '@/lib/crf/casebook';
import { queryOpenBody } from '@/lib/schemas';
import { AppError } from '@/lib/errors';

export const GET = withAuth(
  async ({ req, study, site, roles }) => {
    const sp = req.nextUrl.searchParams;
    const state = sp.get('state') || undefined;
    if (state && !['open', 'answered', 'closed'].includes(state)) throw new AppError('bad_request', 'state must be open, answered or closed.');
    const minAge = sp.get('minAge');
    const p = paging(req, { pageSize: 25 });
    const visible = (await visibleFormKeys(study!, roles)).map((f) => f.key);
    return { ...(await listQueries({ studyId: study!.id, siteId: site!.id, state, formKey: sp.get('form') || undefined, minAgeDays: minAge ? Math.max(0, Number(minAge) || 0) : undefined, visibleForms: visible, ...p })), page: p.page, pageSize: p.pageSize };
  },
  { scope: 'site', roles: ['monitor', 'data_manager', 'coordinator', 'investigator', 'therapist', 'assessor'] },
);

export const POST = withAuth(
  async ({ req, study, site, principal, roles, requestId }) => {
    const b = await readJson(req, queryOpenBody);
    return openQuery({ studyId: study!.id, siteId: site!.id, recordId: b.recordId, itemPath: b.itemPath, message: b.message, actor: { userId: principal.id, role: roles.includes('monitor') ? 'monitor' : 'data_manager', requestId } });
  },
  { scope: 'site', roles: ['monitor', 'data_manager'] },
);
