// GET /api/studies/:study/sites — sites of the study (any member); POST — create a site (admin).
import { withAuth, readJson, paging } from '@/lib/http/handler';
import { createSite, listSites } from '@/lib/sites';
import { siteCreateBody } from '@/lib/schemas';

export const GET = withAuth(
  async ({ req, study }) => {
    const p = paging(req, { pageSize: 50 });
    const r = await listSites(study!.id, { ...p, sort: req.nextUrl.searchParams.get('sort') ?? undefined });
    return { ...r, page: p.page, pageSize: p.pageSize };
  },
  { scope: 'study', roles: 'any' },
);

export const POST = withAuth(
  async ({ req, study, principal, requestId }) => {
    const body = await readJson(req, siteCreateBody);
    return createSite({ studyId: study!.id, input: body, actor: { userId: principal.id, role: 'admin', requestId } });
  },
  { scope: 'study', roles: ['admin'], lock: 'admin' },
);
