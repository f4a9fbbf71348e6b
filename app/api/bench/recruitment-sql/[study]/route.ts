// GET /api/bench/recruitment-sql/:study — the dashboard's recruitment counts by one SQL query, behind the same gate as
// the dashboard; the baseline for the dashboard benchmark (404 unless EXCURSION_BENCH=1).
import { withAuth } from '@/lib/http/handler';
import { benchOnly, recruitmentBySql } from '@/lib/bench';

export const GET = benchOnly(
  withAuth(async ({ study }) => ({ rows: await recruitmentBySql(study!.id) }), { scope: 'study', roles: ['investigator', 'data_manager', 'monitor'] }),
);
