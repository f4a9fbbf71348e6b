import 'server-only';
import { QueryTypes } from 'sequelize';
import { sequelize } from '@/models';
import { randomUUID } from 'node:crypto';
import type { NextRequest } from 'next/server';
import { errorResponse } from '@/lib/http/handler';

/**
 * Benchmark-only routes exist only when the server was started with EXCURSION_BENCH=1 (`npm run bench`): otherwise
 * they answer 404 to everyone before any gate runs, as if they were not there.
 */
export function benchOnly<C>(handler: (req: NextRequest, ctx: C) => Promise<Response>) {
  return async (req: NextRequest, ctx: C): Promise<Response> => {
    if (process.env.EXCURSION_BENCH !== '1') return errorResponse('not_found', 404, 'This address was not found.', randomUUID());
    return handler(req, ctx);
  };
}

/**
 * The dashboard's recruitment counts per site (screened, eligible, consented, randomised) in one SQL query: the
 * baseline the dashboard is compared with by `npm run bench`. Not used by the product itself.
 */
export async function recruitmentBySql(studyId: number) {
  return sequelize.query<{ site: string; target: number; screened: number; eligible: number; consented: number; randomised: number }>(
    `SELECT s.code AS site, s.recruitment_target AS target,
            COUNT(p.id) AS screened,
            COALESCE(SUM(p.screening_outcome = 'eligible'), 0) AS eligible,
            COUNT(DISTINCT c.participant_id) AS consented,
            COUNT(DISTINCT a.participant_id) AS randomised
       FROM sites s
       LEFT JOIN participants p ON p.site_id = s.id AND p.study_id = s.study_id
       LEFT JOIN crf_records c ON c.participant_id = p.id AND c.form_key = 'consent' AND c.status = 'submitted'
       LEFT JOIN allocations a ON a.participant_id = p.id
      WHERE s.study_id = ?
      GROUP BY s.id, s.code, s.recruitment_target
      ORDER BY s.code`,
    { type: QueryTypes.SELECT, replacements: [studyId] },
  );
}
