// GET /api/studies/:study/users — people in the study with their roles (admin), paged, ?q= search.
import { withAuth, paging } from '@/lib/http/handler';
import { listStudyUsers } from '@/lib/users/admin';

export const GET = withAuth(
  async ({ req, study }) => {
    const p = paging(req, { pageSize: 20 });
    const search = req.nextUrl.searchParams.get('q')?.slice(0, 100) || undefined;
    return { ...(await listStudyUsers(study!.id, { ...p, search })), page: p.page, pageSize: p.pageSize };
  },
  { scope: 'study', roles: ['admin'] },
);
