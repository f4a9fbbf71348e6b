// GET /api/studies/:study/sites/:site — one site and its team (members of that site or study-wide);
// PATCH — edit the site (admin).
import { withAuth, readJson } from '@/lib/http/handler';
import { presentSite, updateSite } from '@/lib/sites';
import { siteTeam } from '@/lib/sites/team';
import { siteUpdateBody } from '@/lib/schemas';

export const GET = withAuth(async ({ study, site }) => ({ ...presentSite(site!), team: await siteTeam(study!.id, site!.id) }), { scope: 'site', roles: 'any' });

export const PATCH = withAuth(
  async ({ req, study, site, principal, requestId }) => {
    const { reason, ...patch } = await readJson(req, siteUpdateBody);
    return updateSite({ studyId: study!.id, code: site!.code, patch, reason, actor: { userId: principal.id, role: 'admin', requestId } });
  },
  { scope: 'site', roles: ['admin'], lock: 'admin' },
);
