/**
 * Tests on a 2×2 table of counts [[a, b], [c, d]] (rows = groups, columns = outcome), as R's
 * fisher.test() and chisq.test() define them.
 */
import { InvalidInputError } from './errors';
import { chiSquare1UpperTail } from './distributions';
import { ALTERNATIVES, type Alternative } from './ttest';
import { requireChoice, requireCount, requireOptions, shown } from './validate';

export type Table2x2 = [[number, number], [number, number]];

function requireTable(table: unknown): [number, number, number, number] {
  const isPair = (row: unknown): row is unknown[] => Array.isArray(row) && row.length === 2;
  if (!Array.isArray(table) || table.length !== 2 || !isPair(table[0]) || !isPair(table[1])) {
    throw new InvalidInputError(`The table must be two rows of two counts, [[a, b], [c, d]] (got ${shown(table)}).`);
  }
  const names = ['row 1, column 1', 'row 1, column 2', 'row 2, column 1', 'row 2, column 2'];
  const cells = [table[0][0], table[0][1], table[1][0], table[1][1]];
  const [a, b, c, d] = cells.map((v, i) => requireCount(v, `The count in ${names[i]}`));
  return [a, b, c, d];
}

export interface FisherOptions {
  /** 'greater': odds ratio > 1 (more of row 1 in column 1). Default 'two-sided'. */
  alternative?: Alternative;
}

/**
 * Fisher's exact test. Two-sided p (the default) is the sum of the probabilities of all tables with the
 * same margins whose probability is at most the observed one × (1 + 1e-7), as R computes it.
 */
export function fisherExact(table: Table2x2, opts?: FisherOptions): { p: number } {
  const [a, b, c, d] = requireTable(table);
  const o = requireOptions(opts, 'The Fisher test options');
  const alternative = o.alternative === undefined ? 'two-sided' : requireChoice(o.alternative, ALTERNATIVES, 'The alternative');
  const m = a + c; // column 1 total
  const n = b + d; // column 2 total
  const k = a + b; // row 1 total
  if (m + n === 0) throw new InvalidInputError('The table has no observations (all four counts are 0).');
  const lo = Math.max(0, k - n);
  const hi = Math.min(k, m);
  // Hypergeometric weights built from the mode outward with the ratio
  // P(s + 1)/P(s) = (m − s)(k − s) / ((s + 1)(n − k + s + 1)); no factorials, so no rounding from log-gamma.
  const weights = new Float64Array(hi - lo + 1);
  const mode = Math.min(hi, Math.max(lo, Math.floor(((k + 1) * (m + 1)) / (m + n + 2))));
  weights[mode - lo] = 1;
  for (let s = mode; s < hi; s++) {
    weights[s + 1 - lo] = (weights[s - lo] * (m - s) * (k - s)) / ((s + 1) * (n - k + s + 1));
  }
  for (let s = mode; s > lo; s--) {
    weights[s - 1 - lo] = (weights[s - lo] * s * (n - k + s)) / ((m - s + 1) * (k - s + 1));
  }
  let total = 0;
  for (const w of weights) total += w;
  const observed = weights[a - lo];
  let tail = 0;
  if (alternative === 'less') {
    for (let s = lo; s <= a; s++) tail += weights[s - lo];
  } else if (alternative === 'greater') {
    for (let s = a; s <= hi; s++) tail += weights[s - lo];
  } else {
    // The relative allowance keeps tables whose probability equals the observed one in theory but
    // differs in the last bits from counting as "more extreme" or not by accident.
    const limit = observed * (1 + 1e-7);
    for (const w of weights) if (w <= limit) tail += w;
  }
  return { p: Math.min(1, tail / total) };
}

/** Pearson's chi-square test of a 2×2 table, with Yates' correction min(0.5, |O − E|) unless correct = false. */
export function chiSquare2x2(table: Table2x2, correct = true): { statistic: number; df: number; p: number } {
  const [a, b, c, d] = requireTable(table);
  if (typeof correct !== 'boolean') {
    throw new InvalidInputError(`The correct argument must be true or false (got ${shown(correct)}).`);
  }
  const observed = [a, b, c, d];
  const rows = [a + b, c + d];
  const cols = [a + c, b + d];
  const total = a + b + c + d;
  const emptyMargin = [
    [rows[0], 'row 1'],
    [rows[1], 'row 2'],
    [cols[0], 'column 1'],
    [cols[1], 'column 2'],
  ].find(([sum]) => sum === 0);
  if (emptyMargin) {
    throw new InvalidInputError(`The total of ${emptyMargin[1]} is 0, so the expected counts are 0 and the chi-square test is undefined.`);
  }
  const expected = [0, 1, 2, 3].map((i) => (rows[i >> 1] * cols[i & 1]) / total);
  const deviations = observed.map((o, i) => Math.abs(o - expected[i]));
  const yates = correct ? Math.min(0.5, ...deviations) : 0;
  let statistic = 0;
  for (let i = 0; i < 4; i++) statistic += (deviations[i] - yates) ** 2 / expected[i];
  // 2·Q(√X²) keeps small p-values, where 1 − CDF would round to 0.
  return { statistic, df: 1, p: chiSquare1UpperTail(statistic) };
}
