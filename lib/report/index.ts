import 'server-only';
import { AppError } from '@/lib/errors';
import { isBlinded } from '@/lib/crf/access';
import { logAccess } from '@/lib/access-log';
import type { Role } from '@/lib/roles';
import { loadReportDataset } from './dataset';
import { buildReport, type TrialReport } from './tables';

/** Roles that may open the trial report (it carries arms): the statistician and the data manager, when unblinded. */
export const REPORT_ROLES: readonly Role[] = ['statistician', 'data_manager'];
/** Roles that may use the sample-size calculator (it reads no study data). */
export const SAMPLE_SIZE_ROLES: readonly Role[] = ['statistician', 'data_manager', 'investigator'];

type StudyLike = { id: number; code: string; config: Record<string, unknown> };

/**
 * The trial report of a study for a reader acting in `roles` (already limited to REPORT_ROLES). Refused for
 * blinded readers, whatever their role, because every table is by arm. Each viewing is written to the access log.
 */
export async function trialReport(study: StudyLike, roles: Role[], viewer: { userId: number; requestId?: string }): Promise<TrialReport> {
  if (roles.length === 0 || isBlinded(roles, study.config)) {
    throw new AppError('forbidden', 'The trial report shows results by arm, so blinded roles cannot open it.');
  }
  const report = buildReport(await loadReportDataset(study.id));
  await logAccess({ event: 'download', userId: viewer.userId, requestId: viewer.requestId ?? null, detail: { kind: 'trial_report', study: study.code, source: report.source.kind } });
  return report;
}
