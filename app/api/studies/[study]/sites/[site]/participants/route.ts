// GET /api/studies/:study/sites/:site/participants — participants of the site, paged; the arm column only for unblinded readers.
import { withAuth, paging } from '@/lib/http/handler';
import { listParticipants } from '@/lib/participants';
import { armsFor } from '@/lib/allocation';

const READERS = ['coordinator', 'therapist', 'assessor', 'investigator', 'monitor', 'data_manager'] as const;

export const GET = withAuth(
  async ({ req, study, site, roles }) => {
    const p = paging(req, { pageSize: 25 });
    const list = await listParticipants(study!.id, site!.id, { ...p, search: req.nextUrl.searchParams.get('q')?.slice(0, 40) || undefined });
    const arms = await armsFor(study!, list.rows.map((r) => r.id), roles);
    // Blinded readers get rows without any arm field at all, not an empty one.
    const rows = arms ? list.rows.map((r) => ({ ...r, arm: arms.get(r.id) ?? null })) : list.rows;
    return { total: list.total, rows, page: p.page, pageSize: p.pageSize, showsArm: arms !== null };
  },
  { scope: 'site', roles: READERS },
);
