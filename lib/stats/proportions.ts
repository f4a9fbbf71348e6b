/**
 * Confidence intervals for a proportion and for the difference of two independent proportions.
 */
import { InvalidInputError } from './errors';
import { normalQuantile } from './distributions';
import { requireCount, requireOpenUnit } from './validate';

function requireSuccesses(x: unknown, n: unknown, xLabel: string, nLabel: string): [number, number] {
  const trials = requireCount(n, nLabel, 1);
  const successes = requireCount(x, xLabel);
  if (successes > trials) {
    throw new InvalidInputError(`${xLabel} (${successes}) cannot exceed ${nLabel.toLowerCase()} (${trials}).`);
  }
  return [successes, trials];
}

/** Wilson limits for x/n at the normal quantile z, written as R's prop.test (correct = FALSE) computes them. */
function wilsonLimits(x: number, n: number, z: number): { lower: number; upper: number } {
  const p = x / n;
  const z22n = (z * z) / (2 * n);
  const spread = z * Math.sqrt((p * (1 - p)) / n + z22n / (2 * n));
  // R sets the limit to exactly 0 (or 1) when x = 0 (or x = n) rather than trusting the rounding.
  const lower = p <= 0 ? 0 : (p + z22n - spread) / (1 + 2 * z22n);
  const upper = p >= 1 ? 1 : (p + z22n + spread) / (1 + 2 * z22n);
  return { lower, upper };
}

function zFor(confLevel: number): number {
  return normalQuantile((1 + requireOpenUnit(confLevel, 'The confidence level')) / 2);
}

/** Wilson score interval for x successes in n trials, without continuity correction. */
export function wilsonCI(x: number, n: number, confLevel = 0.95): { lower: number; upper: number } {
  const [successes, trials] = requireSuccesses(x, n, 'The number of successes x', 'The number of trials n');
  return wilsonLimits(successes, trials, zFor(confLevel));
}

/**
 * Difference p1 − p2 of two independent proportions with Newcombe's hybrid score interval (his method 10,
 * no continuity correction): lower = d − √((p1 − l1)² + (u2 − p2)²), upper = d + √((u1 − p1)² + (p2 − l2)²),
 * where (l, u) are the Wilson limits of each proportion.
 */
export function riskDifferenceCI(
  x1: number,
  n1: number,
  x2: number,
  n2: number,
  confLevel = 0.95,
): { diff: number; lower: number; upper: number } {
  const [s1, t1] = requireSuccesses(x1, n1, 'The number of successes x1', 'The number of trials n1');
  const [s2, t2] = requireSuccesses(x2, n2, 'The number of successes x2', 'The number of trials n2');
  const z = zFor(confLevel);
  const p1 = s1 / t1;
  const p2 = s2 / t2;
  const w1 = wilsonLimits(s1, t1, z);
  const w2 = wilsonLimits(s2, t2, z);
  const diff = p1 - p2;
  return {
    diff,
    lower: diff - Math.hypot(p1 - w1.lower, w2.upper - p2),
    upper: diff + Math.hypot(w1.upper - p1, p2 - w2.lower),
  };
}
