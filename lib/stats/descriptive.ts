/**
 * Descriptive statistics: mean, sample standard deviation, type-7 quantiles, lag-1 autocorrelation.
 *
 * Sums use compensated (Neumaier) addition and the variance uses the corrected two-pass formula
 * Σ(x − x̄)² − (Σ(x − x̄))²/n, so data with a large common offset (1000000.1, 1000000.3, …) keep their
 * digits; the naive Σx² − (Σx)²/n formula loses all of them.
 */
import { InvalidInputError } from './errors';
import { requireSample, requireUnit } from './validate';

/** Neumaier-compensated sum. */
export function accurateSum(values: readonly number[]): number {
  let sum = 0;
  let compensation = 0;
  for (const v of values) {
    const t = sum + v;
    compensation += Math.abs(sum) >= Math.abs(v) ? sum - t + v : v - t + sum;
    sum = t;
  }
  return sum + compensation;
}

/** Mean with one refinement pass (the mean of the residuals is added back), as R's mean() does. */
export function meanOf(values: readonly number[]): number {
  const n = values.length;
  const first = accurateSum(values) / n;
  let residual = 0;
  for (const v of values) residual += v - first;
  return first + residual / n;
}

/** Σ(x − m)², corrected for the rounding in m (two-pass algorithm). */
function sumSquaredDeviations(values: readonly number[], m: number): number {
  let squares = 0;
  let deviations = 0;
  for (const v of values) {
    const d = v - m;
    squares += d * d;
    deviations += d;
  }
  return squares - (deviations * deviations) / values.length;
}

/** Sample variance (divisor n − 1) of already validated values with n ≥ 2. */
export function sampleVariance(values: readonly number[], m: number = meanOf(values)): number {
  return Math.max(0, sumSquaredDeviations(values, m) / (values.length - 1));
}

function sortedCopy(values: readonly number[]): number[] {
  return [...values].sort((a, b) => a - b);
}

/** Type-7 quantile of sorted values, written as R's quantile() computes it. */
function quantileSorted(sorted: readonly number[], p: number): number {
  const index = (sorted.length - 1) * p;
  const lo = Math.floor(index);
  const hi = Math.ceil(index);
  const low = sorted[lo];
  const high = sorted[hi];
  const h = index - lo;
  // R interpolates only when the two order statistics differ, so ties return the tied value exactly.
  return h > 0 && high !== low ? (1 - h) * low + h * high : low;
}

/** Sample quantile(s) by R's default definition (type 7): linear interpolation of order statistics at (n − 1)p. */
export function quantile(values: number[], p: number): number;
export function quantile(values: number[], p: readonly number[]): number[];
export function quantile(values: number[], p: number | readonly number[]): number | number[] {
  const data = requireSample(values, 'the list of values', 1);
  const sorted = sortedCopy(data);
  if (Array.isArray(p)) {
    return p.map((level, i) => quantileSorted(sorted, requireUnit(level, `Quantile level ${i + 1}`)));
  }
  return quantileSorted(sorted, requireUnit(p, 'The quantile level p'));
}

/** Summary of a sample. */
export interface Description {
  n: number;
  mean: number;
  /** Sample standard deviation, divisor n − 1. */
  sd: number;
  median: number;
  /** First quartile, type 7. */
  q1: number;
  /** Third quartile, type 7. */
  q3: number;
  min: number;
  max: number;
}

/** n, mean, sample SD (n − 1), median, type-7 quartiles, min and max of at least two values. */
export function describe(values: number[]): Description {
  const data = requireSample(values, 'the list of values', 2, ' for a standard deviation');
  const sorted = sortedCopy(data);
  const mean = meanOf(data);
  return {
    n: data.length,
    mean,
    sd: Math.sqrt(sampleVariance(data, mean)),
    median: quantileSorted(sorted, 0.5),
    q1: quantileSorted(sorted, 0.25),
    q3: quantileSorted(sorted, 0.75),
    min: sorted[0],
    max: sorted[sorted.length - 1],
  };
}

/** Lag-1 autocorrelation Σ_{i≥2}(y_i − ȳ)(y_{i−1} − ȳ) / Σ(y_i − ȳ)², the order of the values mattering. */
export function lag1Autocorrelation(values: number[]): number {
  const data = requireSample(values, 'the list of values', 2, ' for an autocorrelation');
  const m = meanOf(data);
  let numerator = 0;
  let denominator = 0;
  for (let i = 0; i < data.length; i++) {
    const d = data[i] - m;
    denominator += d * d;
    if (i > 0) numerator += d * (data[i - 1] - m);
  }
  if (denominator === 0) {
    throw new InvalidInputError('The autocorrelation is undefined when all values are equal.');
  }
  return numerator / denominator;
}
