/**
 * Wilcoxon rank tests as R's wilcox.test() defines them.
 *
 * - mannWhitney(a, b): W = rank sum of a − n_a(n_a + 1)/2 (the Mann–Whitney U of sample a).
 * - wilcoxonSignedRank(x, { y }): V = sum of the ranks of the positive differences; with `y` the
 *   differences are x[i] − y[i] (the paired test). The second sample is passed as an option, not as a
 *   second argument, so the call reads the same with and without it.
 *
 * Exact p-values are used when both samples have fewer than 50 values and there are no ties (and, for
 * the signed-rank test, no zero differences), unless `exact: false`. `exact: true` with ties or zeros
 * falls back to the normal approximation, as R does (R also warns). The normal approximation uses R's
 * tie-corrected variance and, unless `correct: false`, its continuity correction (±0.5 towards zero for
 * two-sided). Zero differences are dropped before ranking, as in R. Exact distributions are counted by
 * dynamic programming over the ranks, never simulated.
 */
import { InvalidInputError } from './errors';
import { normalCdf } from './distributions';
import { ALTERNATIVES, type Alternative } from './ttest';
import { requireChoice, requireFinite, requireOptions, requireSample, shown } from './validate';

export interface RankTestOptions {
  /** 'greater' means a (or x − mu) tends to be larger. Default 'two-sided'. */
  alternative?: Alternative;
  /** true: exact p-value where R would allow it; false: always the normal approximation. Default: exact when n < 50 without ties. */
  exact?: boolean;
  /** Continuity correction in the normal approximation. Default true. */
  correct?: boolean;
  /** Location shift under the null hypothesis. Default 0. */
  mu?: number;
}

export interface SignedRankOptions extends RankTestOptions {
  /** Second sample for the paired test; the test then uses x[i] − y[i]. */
  y?: number[];
}

export interface MannWhitneyResult {
  W: number;
  p: number;
  /** Whether the p-value is exact (true) or from the normal approximation (false). */
  exact: boolean;
}

export interface SignedRankResult {
  V: number;
  p: number;
  /** Whether the p-value is exact (true) or from the normal approximation (false). */
  exact: boolean;
}

interface Resolved {
  alternative: Alternative;
  exact: boolean | undefined;
  correct: boolean;
  mu: number;
}

function requireBoolean(value: unknown, label: string): boolean {
  if (typeof value !== 'boolean') throw new InvalidInputError(`${label} must be true or false (got ${shown(value)}).`);
  return value;
}

function resolve(o: Partial<RankTestOptions>): Resolved {
  return {
    alternative: o.alternative === undefined ? 'two-sided' : requireChoice(o.alternative, ALTERNATIVES, 'The alternative'),
    exact: o.exact === undefined ? undefined : requireBoolean(o.exact, 'The exact option'),
    correct: o.correct === undefined ? true : requireBoolean(o.correct, 'The correct option'),
    mu: o.mu === undefined ? 0 : requireFinite(o.mu, 'The hypothesised shift mu'),
  };
}

/** Average ranks (1-based) of the values, with the sizes of the tie groups. */
function rankWithTies(values: readonly number[]): { ranks: number[]; tieSizes: number[] } {
  const order = values.map((_, i) => i).sort((i, j) => values[i] - values[j]);
  const ranks = new Array<number>(values.length);
  const tieSizes: number[] = [];
  let start = 0;
  while (start < order.length) {
    let end = start;
    while (end + 1 < order.length && values[order[end + 1]] === values[order[start]]) end++;
    const rank = (start + end) / 2 + 1;
    for (let k = start; k <= end; k++) ranks[order[k]] = rank;
    tieSizes.push(end - start + 1);
    start = end + 1;
  }
  return { ranks, tieSizes };
}

// Exact counting is O(N·m·mn) for the rank sum and O(n³) for the signed rank; beyond this many steps
// the caller is asked to use the normal approximation instead of waiting.
const MAX_EXACT_STEPS = 5e8;

/**
 * Number of ways each Mann–Whitney U = 0..m·n arises when m of the N = m + n ranks belong to the first
 * sample. Choosing rank position j as the (k+1)-th member adds j − k (the second-sample values below it).
 */
function rankSumCounts(m: number, n: number): Float64Array[] {
  const total = m + n;
  const rows: Float64Array[] = [];
  for (let k = 0; k <= m; k++) rows.push(new Float64Array(k * n + 1));
  rows[0][0] = 1;
  for (let j = 0; j < total; j++) {
    // Descending k so each position is used at most once (0/1 knapsack).
    for (let k = Math.min(j, m - 1); k >= 0; k--) {
      const add = j - k;
      if (add > n) continue;
      const from = rows[k];
      const to = rows[k + 1];
      const maxU = Math.min(k * n, (k + 1) * n - add);
      for (let u = 0; u <= maxU; u++) {
        if (from[u] !== 0) to[u + add] += from[u];
      }
    }
  }
  return rows;
}

/** P(W ≤ q) and P(W ≥ q) of the exact Mann–Whitney distribution. */
function exactRankSumTails(q: number, m: number, n: number): { lower: number; upper: number } {
  const counts = rankSumCounts(m, n)[m];
  let total = 0;
  let lower = 0;
  let upper = 0;
  for (let u = 0; u < counts.length; u++) {
    total += counts[u];
    if (u <= q) lower += counts[u];
    if (u >= q) upper += counts[u];
  }
  return { lower: lower / total, upper: upper / total };
}

/** P(V ≤ q) and P(V ≥ q) of the exact signed-rank distribution for n nonzero differences. */
function exactSignedRankTails(q: number, n: number): { lower: number; upper: number } {
  const maxSum = (n * (n + 1)) / 2;
  const counts = new Float64Array(maxSum + 1);
  counts[0] = 1;
  for (let r = 1; r <= n; r++) {
    for (let s = (r * (r + 1)) / 2; s >= r; s--) counts[s] += counts[s - r];
  }
  let total = 0;
  let lower = 0;
  let upper = 0;
  for (let s = 0; s <= maxSum; s++) {
    total += counts[s];
    if (s <= q) lower += counts[s];
    if (s >= q) upper += counts[s];
  }
  return { lower: lower / total, upper: upper / total };
}

/** Two-sided or one-sided exact p-value from the two tails, as R's pwilcox/psignrank branches do. */
function exactP(statistic: number, centre: number, tails: (q: number) => { lower: number; upper: number }, alternative: Alternative): number {
  if (alternative === 'greater') return tails(statistic).upper;
  if (alternative === 'less') return tails(statistic).lower;
  const t = tails(statistic);
  return Math.min(1, 2 * (statistic > centre ? t.upper : t.lower));
}

/** Normal-approximation p-value with R's continuity correction. */
function normalP(statistic: number, centre: number, sigma: number, o: Resolved): number {
  let z = statistic - centre;
  let correction = 0;
  if (o.correct) {
    if (o.alternative === 'two-sided') correction = Math.sign(z) * 0.5;
    else correction = o.alternative === 'greater' ? 0.5 : -0.5;
  }
  z = (z - correction) / sigma;
  if (o.alternative === 'less') return normalCdf(z);
  if (o.alternative === 'greater') return normalCdf(-z);
  return 2 * Math.min(normalCdf(z), normalCdf(-z));
}

/** Wilcoxon rank-sum (Mann–Whitney) test of a against b, as R's wilcox.test(a, b). */
export function mannWhitney(a: number[], b: number[], opts?: RankTestOptions): MannWhitneyResult {
  const o = resolve(requireOptions(opts, 'The rank-test options'));
  const x = requireSample(a, 'sample a', 1);
  const y = requireSample(b, 'sample b', 1);
  const m = x.length;
  const n = y.length;
  const { ranks, tieSizes } = rankWithTies([...x.map((v) => v - o.mu), ...y]);
  let rankSum = 0;
  for (let i = 0; i < m; i++) rankSum += ranks[i];
  const W = rankSum - (m * (m + 1)) / 2;
  const ties = tieSizes.some((size) => size > 1);
  const wantExact = o.exact ?? (m < 50 && n < 50);
  if (wantExact && !ties) {
    const small = Math.min(m, n);
    if ((m + n) * small * m * n > MAX_EXACT_STEPS) {
      throw new InvalidInputError(
        `An exact rank-sum p-value for samples of ${m} and ${n} is too costly to count; use exact: false.`,
      );
    }
    // The count table is built over the smaller sample; U of one sample is m·n minus U of the other.
    const tails = (q: number) => {
      if (m <= n) return exactRankSumTails(q, m, n);
      const t = exactRankSumTails(m * n - q, n, m);
      return { lower: t.upper, upper: t.lower };
    };
    return { W, p: exactP(W, (m * n) / 2, tails, o.alternative), exact: true };
  }
  const N = m + n;
  const tieTerm = tieSizes.reduce((s, t) => s + (t * t * t - t), 0);
  const sigma = Math.sqrt(((m * n) / 12) * (N + 1 - tieTerm / (N * (N - 1))));
  if (!(sigma > 0)) {
    throw new InvalidInputError('All values in the two samples are equal, so a rank-sum test is undefined.');
  }
  return { W, p: normalP(W, (m * n) / 2, sigma, o), exact: false };
}

/** Wilcoxon signed-rank test of x (or of x[i] − y[i] when opts.y is given) about mu, as R's wilcox.test(x, y, paired = TRUE). */
export function wilcoxonSignedRank(x: number[], opts?: SignedRankOptions): SignedRankResult {
  const raw = requireOptions(opts, 'The signed-rank options');
  const o = resolve(raw);
  const first = requireSample(x, raw.y === undefined ? 'the sample' : 'sample x', 1);
  let d = first;
  if (raw.y !== undefined) {
    const second = requireSample(raw.y, 'sample y', 1);
    if (second.length !== first.length) {
      throw new InvalidInputError(
        `A paired signed-rank test needs samples of equal length (sample x has ${first.length}, sample y has ${second.length}).`,
      );
    }
    d = first.map((v, i) => v - second[i]);
  }
  const shifted = d.map((v) => v - o.mu);
  const zeroes = shifted.some((v) => v === 0);
  const nonzero = shifted.filter((v) => v !== 0);
  const n = nonzero.length;
  if (n === 0) {
    throw new InvalidInputError('Every difference equals mu (after subtracting it nothing is left to rank), so a signed-rank test is undefined.');
  }
  const { ranks, tieSizes } = rankWithTies(nonzero.map(Math.abs));
  let V = 0;
  nonzero.forEach((v, i) => {
    if (v > 0) V += ranks[i];
  });
  const ties = tieSizes.some((size) => size > 1);
  // R decides "n < 50" on the count left after dropping zero differences.
  const wantExact = o.exact ?? n < 50;
  if (wantExact && !ties && !zeroes) {
    if ((n * n * (n + 1)) / 2 > MAX_EXACT_STEPS) {
      throw new InvalidInputError(`An exact signed-rank p-value for ${n} differences is too costly to count; use exact: false.`);
    }
    return { V, p: exactP(V, (n * (n + 1)) / 4, (q) => exactSignedRankTails(q, n), o.alternative), exact: true };
  }
  const tieTerm = tieSizes.reduce((s, t) => s + (t * t * t - t), 0);
  const sigma = Math.sqrt((n * (n + 1) * (2 * n + 1)) / 24 - tieTerm / 48);
  return { V, p: normalP(V, (n * (n + 1)) / 4, sigma, o), exact: false };
}
