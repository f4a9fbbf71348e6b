/**
 * Number formatting for trial report tables. Pure and dependency-free, so server pages and client components
 * share it. Statistics are computed unrounded (lib/stats); only these helpers round, and only for display.
 */

/** The typographic minus sign used for negative numbers in tables. */
export const MINUS = '\u2212';
/** What a table shows where no value can be given. */
export const DASH = '\u2014';

const usable = (x: number | null | undefined): x is number => typeof x === 'number' && Number.isFinite(x);

/** x with `dp` decimals and a true minus sign; a value that rounds to zero is shown without a sign. */
export function formatNumber(x: number | null | undefined, dp = 1): string {
  if (!usable(x)) return DASH;
  const s = x.toFixed(dp);
  if (!s.startsWith('-')) return s;
  // -0.04 at 1 dp is "-0.0": no sign on a zero.
  return /^-0(\.0*)?$/.test(s) ? s.slice(1) : MINUS + s.slice(1);
}

/** A p-value with `dp` decimals (3 by default), or "< 0.001" below the smallest value those decimals can show. */
export function formatP(p: number | null | undefined, dp = 3): string {
  if (!usable(p)) return DASH;
  const floor = 10 ** -dp;
  if (p < floor) return `< ${floor.toFixed(dp)}`;
  return Math.min(1, p).toFixed(dp);
}

/** "mean (SD)", e.g. "41.2 (9.8)". */
export function formatMeanSd(mean: number | null | undefined, sd: number | null | undefined, dp = 1): string {
  if (!usable(mean)) return DASH;
  return `${formatNumber(mean, dp)} (${usable(sd) ? formatNumber(sd, dp) : DASH})`;
}

/** "median [Q1, Q3]", e.g. "3 [2, 5]". */
export function formatMedianIqr(median: number | null | undefined, q1: number | null | undefined, q3: number | null | undefined, dp = 1): string {
  if (!usable(median)) return DASH;
  return `${formatNumber(median, dp)} [${formatNumber(q1, dp)}, ${formatNumber(q3, dp)}]`;
}

/** A percentage of a count, e.g. 9 of 10 → "90.0"; "—" for an empty denominator. */
export function formatPercent(count: number, denominator: number, dp = 1): string {
  return denominator > 0 ? formatNumber((100 * count) / denominator, dp) : DASH;
}

/** "n (%)", e.g. "9 (90.0 %)". */
export function formatCountPct(count: number, denominator: number, dp = 1): string {
  return denominator > 0 ? `${count} (${formatPercent(count, denominator, dp)} %)` : `${count}`;
}

/** "n/N (%)", e.g. "9/10 (90.0 %)". */
export function formatFraction(count: number, denominator: number, dp = 1): string {
  return denominator > 0 ? `${count}/${denominator} (${formatPercent(count, denominator, dp)} %)` : `${count}/${denominator}`;
}

/** A confidence interval "lower to upper", e.g. "−0.21 to 3.37". */
export function formatCI(ci: readonly [number, number] | null | undefined, dp = 1): string {
  if (!ci || !usable(ci[0]) || !usable(ci[1])) return DASH;
  return `${formatNumber(ci[0], dp)} to ${formatNumber(ci[1], dp)}`;
}

/** "p = 0.079" or "p < 0.001". */
export function formatPStatement(p: number | null | undefined, dp = 3): string {
  const s = formatP(p, dp);
  return s.startsWith('<') ? `p ${s}` : `p = ${s}`;
}
