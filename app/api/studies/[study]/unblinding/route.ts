// GET /api/studies/:study/unblinding — the unblinding register (data manager, investigator): who, when, why; never the arm.
import { withAuth } from '@/lib/http/handler';
import { unblindingRegister } from '@/lib/allocation';

export const GET = withAuth(async ({ study }) => ({ rows: await unblindingRegister(study!.id) }), { scope: 'study', roles: ['data_manager', 'investigator'] });
