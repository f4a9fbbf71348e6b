// GET /api/studies/:study/worklist?kind=assessor|coordinator — visits due at the person's sites, sorted by the
// window's last day. The assessor's list holds only blinded outcome visits and nothing arm-revealing.
import { withAuth } from '@/lib/http/handler';
import { worklistFor } from '@/lib/visits/worklist-for';
import { AppError } from '@/lib/errors';

export const GET = withAuth(
  async ({ req, study, principal, roles }) => {
    const kind = req.nextUrl.searchParams.get('kind') ?? (roles.includes('assessor') ? 'assessor' : 'coordinator');
    if (kind !== 'assessor' && kind !== 'coordinator') throw new AppError('bad_request', 'kind must be assessor or coordinator.');
    if (!roles.includes(kind)) throw new AppError('forbidden', `You do not hold the ${kind} role in this study.`);
    return { kind, rows: await worklistFor(study!, principal, kind) };
  },
  { scope: 'study', roles: ['assessor', 'coordinator'] },
);
