/**
 * t tests as R's t.test() defines them: Welch (the default), Student (var.equal = TRUE), paired and
 * one-sample, each with a two-sided or one-sided alternative and an interval at `confLevel`.
 *
 * `meanDiff` is mean(a) − mean(b) for the two-sample tests, the mean of the differences a − b for the
 * paired test, and mean(x) − mu for the one-sample test. `ci95` is the interval for the quantity
 * `meanDiff` estimates, at `confLevel` (0.95 unless given): for the two-sample and paired tests it is
 * R's interval; for the one-sample test R prints the interval for the mean itself, which is
 * `ci95` shifted by mu. One-sided alternatives give a half-open interval with ±Infinity, as R does.
 */
import { InvalidInputError } from './errors';
import { meanOf, sampleVariance } from './descriptive';
import { studentTCdf, studentTQuantile } from './distributions';
import { requireChoice, requireFinite, requireOpenUnit, requireOptions, requireSample } from './validate';

export type Alternative = 'two-sided' | 'less' | 'greater';
export const ALTERNATIVES: readonly Alternative[] = ['two-sided', 'less', 'greater'];

export interface TTestOptions {
  /** Direction of the alternative hypothesis; 'less' means mean(a) − mean(b) < mu. Default 'two-sided'. */
  alternative?: Alternative;
  /** Confidence level of the interval, 0 < confLevel < 1. Default 0.95. */
  confLevel?: number;
  /** Hypothesised difference (or mean, one-sample). Default 0. */
  mu?: number;
}

export interface TTestResult {
  t: number;
  df: number;
  p: number;
  meanDiff: number;
  /** Interval at the requested confidence level (0.95 by default); one-sided intervals use ±Infinity. */
  ci95: [number, number];
}

interface ResolvedOptions {
  alternative: Alternative;
  confLevel: number;
  mu: number;
}

function resolveOptions(opts: TTestOptions | undefined): ResolvedOptions {
  const o = requireOptions(opts, 'The t-test options');
  return {
    alternative: o.alternative === undefined ? 'two-sided' : requireChoice(o.alternative, ALTERNATIVES, 'The alternative'),
    confLevel: o.confLevel === undefined ? 0.95 : requireOpenUnit(o.confLevel, 'The confidence level'),
    mu: o.mu === undefined ? 0 : requireFinite(o.mu, 'The hypothesised value mu'),
  };
}

/**
 * Finish a t test from an estimate, its standard error and df. `shift` is subtracted from the interval
 * so that it brackets `meanDiff` (mu for the one-sample test, 0 otherwise).
 */
function finish(estimate: number, stderr: number, df: number, o: ResolvedOptions, shift: number, scale: number): TTestResult {
  // R stops with "data are essentially constant" here: the t statistic would be 0/0 or rounding noise.
  if (!(stderr > 10 * Number.EPSILON * scale)) {
    throw new InvalidInputError('The data are essentially constant, so a t test is undefined.');
  }
  const t = (estimate - o.mu) / stderr;
  let p: number;
  let ci: [number, number];
  if (o.alternative === 'less') {
    p = studentTCdf(t, df);
    ci = [-Infinity, o.mu + (t + studentTQuantile(o.confLevel, df)) * stderr];
  } else if (o.alternative === 'greater') {
    p = studentTCdf(-t, df);
    ci = [o.mu + (t - studentTQuantile(o.confLevel, df)) * stderr, Infinity];
  } else {
    p = 2 * studentTCdf(-Math.abs(t), df);
    const q = studentTQuantile(1 - (1 - o.confLevel) / 2, df);
    // Written as R writes it, mu + (t ± q)·se, so the limits agree with R's to the last bit or two.
    ci = [o.mu + (t - q) * stderr, o.mu + (t + q) * stderr];
  }
  return { t, df, p: Math.min(1, p), meanDiff: estimate - shift, ci95: [ci[0] - shift, ci[1] - shift] };
}

/** Welch's two-sample t test (unequal variances, Welch–Satterthwaite df), as R's t.test(a, b). */
export function welchTTest(a: number[], b: number[], opts?: TTestOptions): TTestResult {
  const o = resolveOptions(opts);
  const x = requireSample(a, 'sample a', 2, ' for a Welch t test');
  const y = requireSample(b, 'sample b', 2, ' for a Welch t test');
  const mx = meanOf(x);
  const my = meanOf(y);
  const sx2 = sampleVariance(x, mx) / x.length;
  const sy2 = sampleVariance(y, my) / y.length;
  const stderr = Math.sqrt(sx2 + sy2);
  const df = (sx2 + sy2) ** 2 / ((sx2 * sx2) / (x.length - 1) + (sy2 * sy2) / (y.length - 1));
  return finish(mx - my, stderr, df, o, 0, Math.max(Math.abs(mx), Math.abs(my)));
}

/** Student's two-sample t test with pooled variance, as R's t.test(a, b, var.equal = TRUE). */
export function studentTTest(a: number[], b: number[], opts?: TTestOptions): TTestResult {
  const o = resolveOptions(opts);
  const x = requireSample(a, 'sample a', 1);
  const y = requireSample(b, 'sample b', 1);
  if (x.length + y.length < 3) {
    throw new InvalidInputError(
      `A Student t test needs at least 3 values in the two samples together (got ${x.length + y.length}).`,
    );
  }
  const mx = meanOf(x);
  const my = meanOf(y);
  const df = x.length + y.length - 2;
  // A sample of one contributes no variance term, as in R.
  let pooled = 0;
  if (x.length > 1) pooled += (x.length - 1) * sampleVariance(x, mx);
  if (y.length > 1) pooled += (y.length - 1) * sampleVariance(y, my);
  pooled /= df;
  const stderr = Math.sqrt(pooled * (1 / x.length + 1 / y.length));
  return finish(mx - my, stderr, df, o, 0, Math.max(Math.abs(mx), Math.abs(my)));
}

/** Paired t test on the differences a[i] − b[i], as R's t.test(a, b, paired = TRUE). */
export function pairedTTest(a: number[], b: number[], opts?: TTestOptions): TTestResult {
  const o = resolveOptions(opts);
  const x = requireSample(a, 'sample a', 2, ' for a paired t test');
  const y = requireSample(b, 'sample b', 2, ' for a paired t test');
  if (x.length !== y.length) {
    throw new InvalidInputError(`A paired t test needs samples of equal length (sample a has ${x.length}, sample b has ${y.length}).`);
  }
  const d = x.map((v, i) => v - y[i]);
  const md = meanOf(d);
  const stderr = Math.sqrt(sampleVariance(d, md) / d.length);
  return finish(md, stderr, d.length - 1, o, 0, Math.abs(md));
}

/** One-sample t test of mean(x) = mu, as R's t.test(x, mu = mu); meanDiff and ci95 are for mean(x) − mu. */
export function oneSampleTTest(x: number[], opts?: TTestOptions): TTestResult {
  const o = resolveOptions(opts);
  const data = requireSample(x, 'the sample', 2, ' for a one-sample t test');
  const m = meanOf(data);
  const stderr = Math.sqrt(sampleVariance(data, m) / data.length);
  return finish(m, stderr, data.length - 1, o, o.mu, Math.abs(m));
}
