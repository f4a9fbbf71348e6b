// GET /api/studies/:study/randomisation — activation status and commitment (data manager); never the seed or schedule.
import { withAuth } from '@/lib/http/handler';
import { randomisationStatus } from '@/lib/allocation';

export const GET = withAuth(async ({ study }) => randomisationStatus(study!.id), { scope: 'study', roles: ['data_manager'] });
