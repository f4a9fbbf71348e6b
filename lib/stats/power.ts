/**
 * Power and sample size for comparing two groups, as R's power.t.test() and power.prop.test() define them
 * (two independent groups of equal size n, strict = FALSE: only the rejection region in the direction of the
 * effect counts).
 *
 * R finds n with uniroot() at its default tolerance (about 1e-4), so R prints n to about 4–5 significant
 * digits of the exact root; the functions here return the exact root, and perGroup = ceil(n).
 */
import { InvalidInputError } from './errors';
import { noncentralTCdf, normalCdf, normalQuantile, studentTQuantile } from './distributions';
import { requireChoice, requireFinite, requireOpenUnit, requireUnit, shown } from './validate';

export type PowerAlternative = 'two-sided' | 'one-sided';
const POWER_ALTERNATIVES: readonly PowerAlternative[] = ['two-sided', 'one-sided'];

export interface SampleSize {
  /** Exact (non-integer) number per group solving the power equation. */
  n: number;
  /** Participants to recruit per group: n rounded up. */
  perGroup: number;
}

function requireObject(value: unknown, label: string): Record<string, unknown> {
  if (value === null || typeof value !== 'object' || Array.isArray(value)) {
    throw new InvalidInputError(`${label} must be an object (got ${shown(value)}).`);
  }
  return value as Record<string, unknown>;
}

function sidesOf(value: unknown): 1 | 2 {
  const alternative = value === undefined ? 'two-sided' : requireChoice(value, POWER_ALTERNATIVES, 'The alternative');
  return alternative === 'two-sided' ? 2 : 1;
}

function requireEffect(delta: unknown, sd: unknown): number {
  const d = requireFinite(delta, 'The difference delta');
  if (d === 0) throw new InvalidInputError('The difference delta must not be 0.');
  const s = requireFinite(sd, 'The standard deviation sd');
  if (!(s > 0)) throw new InvalidInputError(`The standard deviation sd must be greater than 0 (got ${s}).`);
  // Only the size of the effect matters; a one-sided design is taken to test in the direction of delta.
  return Math.abs(d) / s;
}

/** power.t.test's power for n per group: P(T > t_{1−α/sides}) with T noncentral t, df 2(n − 1), ncp √(n/2)·δ/σ. */
function tPower(n: number, effect: number, alpha: number, sides: 1 | 2): number {
  const df = 2 * (n - 1);
  const critical = studentTQuantile(1 - alpha / sides, df);
  return noncentralTCdf(critical, df, Math.sqrt(n / 2) * effect, true);
}

/** Brent's root finder for an increasing f with f(lo) < 0 < f(hi). */
function brentRoot(f: (x: number) => number, lo: number, hi: number, tolerance: number): number {
  let a = lo;
  let b = hi;
  let fa = f(a);
  let fb = f(b);
  let c = a;
  let fc = fa;
  let d = b - a;
  let e = d;
  for (let i = 0; i < 200; i++) {
    if (fb * fc > 0) {
      c = a;
      fc = fa;
      d = b - a;
      e = d;
    }
    if (Math.abs(fc) < Math.abs(fb)) {
      a = b;
      b = c;
      c = a;
      fa = fb;
      fb = fc;
      fc = fa;
    }
    const tol = 2 * Number.EPSILON * Math.abs(b) + tolerance / 2;
    const m = (c - b) / 2;
    if (Math.abs(m) <= tol || fb === 0) return b;
    if (Math.abs(e) >= tol && Math.abs(fa) > Math.abs(fb)) {
      // Inverse quadratic (or secant) step, accepted only if it stays well inside the bracket.
      const s = fb / fa;
      let p: number;
      let q: number;
      if (a === c) {
        p = 2 * m * s;
        q = 1 - s;
      } else {
        const qa = fa / fc;
        const r = fb / fc;
        p = s * (2 * m * qa * (qa - r) - (b - a) * (r - 1));
        q = (qa - 1) * (r - 1) * (s - 1);
      }
      if (p > 0) q = -q;
      else p = -p;
      if (2 * p < Math.min(3 * m * q - Math.abs(tol * q), Math.abs(e * q))) {
        e = d;
        d = p / q;
      } else {
        d = m;
        e = m;
      }
    } else {
      d = m;
      e = m;
    }
    a = b;
    fa = fb;
    b += Math.abs(d) > tol ? d : m > 0 ? tol : -tol;
    fb = f(b);
  }
  return b;
}

/** Power of the two-sample t test with n per group (n ≥ 2, may be fractional), as R's power.t.test. */
export function powerTTest(args: { n: number; delta: number; sd: number; alpha?: number; alternative?: PowerAlternative }): number {
  const o = requireObject(args, 'The power calculation settings');
  const n = requireFinite(o.n, 'The number per group n');
  if (n < 2) throw new InvalidInputError(`The number per group n must be at least 2 (got ${n}).`);
  const effect = requireEffect(o.delta, o.sd);
  const alpha = o.alpha === undefined ? 0.05 : requireOpenUnit(o.alpha, 'The significance level alpha');
  return tPower(n, effect, alpha, sidesOf(o.alternative));
}

/** Number per group for a two-sample t test to reach `power`, as R's power.t.test(delta, sd, power) solves it. */
export function sampleSizeTwoMeans(args: {
  delta: number;
  sd: number;
  alpha?: number;
  power?: number;
  alternative?: PowerAlternative;
}): SampleSize {
  const o = requireObject(args, 'The sample-size settings');
  const effect = requireEffect(o.delta, o.sd);
  const alpha = o.alpha === undefined ? 0.05 : requireOpenUnit(o.alpha, 'The significance level alpha');
  const power = o.power === undefined ? 0.8 : requireOpenUnit(o.power, 'The power');
  const sides = sidesOf(o.alternative);
  const gap = (n: number) => tPower(n, effect, alpha, sides) - power;
  const lo = 2;
  const hi = 1e7;
  // Two per group is the smallest design a two-sample t test can analyse; a larger effect needs no more.
  if (gap(lo) >= 0) return { n: lo, perGroup: lo };
  if (gap(hi) < 0) {
    throw new InvalidInputError('The difference is too small relative to the standard deviation: more than 10 million per group would be needed.');
  }
  const n = brentRoot(gap, lo, hi, 1e-10);
  return { n, perGroup: Math.ceil(n) };
}

function requireProportions(p1: unknown, p2: unknown): [number, number] {
  const a = requireUnit(p1, 'The proportion p1');
  const b = requireUnit(p2, 'The proportion p2');
  if (a * (1 - a) + b * (1 - b) === 0) {
    throw new InvalidInputError('The proportions p1 and p2 cannot both be 0 or 1: the outcome would have no variance.');
  }
  return [a, b];
}

/** power.prop.test's normal-approximation power for n per group (n ≥ 1). */
export function powerPropTest(args: { n: number; p1: number; p2: number; alpha?: number; alternative?: PowerAlternative }): number {
  const o = requireObject(args, 'The power calculation settings');
  const n = requireFinite(o.n, 'The number per group n');
  if (n < 1) throw new InvalidInputError(`The number per group n must be at least 1 (got ${n}).`);
  const [p1, p2] = requireProportions(o.p1, o.p2);
  const alpha = o.alpha === undefined ? 0.05 : requireOpenUnit(o.alpha, 'The significance level alpha');
  const zAlpha = -normalQuantile(alpha / sidesOf(o.alternative));
  const pooled = Math.sqrt((p1 + p2) * (1 - (p1 + p2) / 2));
  return normalCdf((Math.sqrt(n) * Math.abs(p1 - p2) - zAlpha * pooled) / Math.sqrt(p1 * (1 - p1) + p2 * (1 - p2)));
}

/**
 * Number per group to detect p1 versus p2 with `power`, as R's power.prop.test(p1, p2, power) solves it.
 * Its power equation (strict = FALSE) solves in closed form:
 * √n = (z_{1−α/sides}·√((p1 + p2)(1 − (p1 + p2)/2)) + z_power·√(p1q1 + p2q2)) / |p1 − p2|.
 */
export function sampleSizeTwoProportions(args: {
  p1: number;
  p2: number;
  alpha?: number;
  power?: number;
  alternative?: PowerAlternative;
}): SampleSize {
  const o = requireObject(args, 'The sample-size settings');
  const [p1, p2] = requireProportions(o.p1, o.p2);
  if (p1 === p2) throw new InvalidInputError('The proportions p1 and p2 must differ to plan a sample size.');
  const alpha = o.alpha === undefined ? 0.05 : requireOpenUnit(o.alpha, 'The significance level alpha');
  const power = o.power === undefined ? 0.8 : requireOpenUnit(o.power, 'The power');
  const zAlpha = -normalQuantile(alpha / sidesOf(o.alternative));
  const zPower = normalQuantile(power);
  const pooled = Math.sqrt((p1 + p2) * (1 - (p1 + p2) / 2));
  const root = (zAlpha * pooled + zPower * Math.sqrt(p1 * (1 - p1) + p2 * (1 - p2))) / Math.abs(p1 - p2);
  // At least one per group; a root below 1 means a single participant per group already reaches the power.
  const n = root > 0 ? Math.max(1, root * root) : 1;
  return { n, perGroup: Math.ceil(n) };
}
