// GET /api/bench/bare — the benchmark baseline: a route handler that does nothing (404 unless EXCURSION_BENCH=1).
import { withPublic } from '@/lib/http/handler';
import { benchOnly } from '@/lib/bench';

export const GET = benchOnly(withPublic(async () => ({ ok: true })));
