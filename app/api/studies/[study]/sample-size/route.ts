// POST /api/studies/:study/sample-size — sample size per group for two means or two proportions
// (statistician, data manager, investigator). Reads no study data and writes nothing.
import { withAuth, readJson } from '@/lib/http/handler';
import { SAMPLE_SIZE_ROLES } from '@/lib/report';
import { planSampleSize } from '@/lib/report/sample-size';
import { sampleSizeBody } from '@/lib/schemas';

export const POST = withAuth(
  async ({ req }) => planSampleSize(await readJson(req, sampleSizeBody)),
  { scope: 'study', roles: SAMPLE_SIZE_ROLES, lock: 'none' },
);
