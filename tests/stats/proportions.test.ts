import { describe, it, expect } from 'vitest';
import { wilsonCI, riskDifferenceCI } from '@/lib/stats';
import { expectNear, printed } from './helpers';

// Sources (check-value file §4.5):
// - NC-*: Newcombe RG. Interval estimation for the difference between independent proportions: comparison of
//   eleven methods. Stat Med 1998;17:873–890, Table II, method 10 (hybrid score, no continuity correction),
//   published to 4 decimals [confirmed]; NC-1 and NC-9 also as SAS reference values (WUSS 2016 paper, used as a
//   test oracle); NC-6 cited in a public test file. Computed limits to 6 decimals [computed].
// - WI-*: Newcombe RG. Two-sided confidence intervals for the single proportion: comparison of seven methods.
//   Stat Med 1998;17:857–872 (Wilson score interval). Computed limits to 6 decimals [computed]; the published
//   4-decimal values of WI-1…WI-3 are from memory; WI-5 and WI-6 also appear to 4 decimals in a public test file.
// Tolerances: half a unit in the last printed decimal (5e-7 for 6 dp, 5e-5 for 4 dp).

describe('wilsonCI [Newcombe 1998, Stat Med 17:857–872]', () => {
  const cases: Array<[id: string, x: number, n: number, lower: number, upper: number, published?: [number, number]]> = [
    ['WI-1', 81, 263, 0.255289, 0.36621, [0.2553, 0.3662]],
    ['WI-2', 15, 148, 0.062386, 0.160487, [0.0624, 0.1605]],
    ['WI-3', 0, 20, 0, 0.161125, [0, 0.1611]],
    ['WI-5', 5, 10, 0.236593, 0.763407, [0.2366, 0.7634]],
    ['WI-6', 8, 10, 0.490162, 0.943318, [0.4902, 0.9433]],
    ['WI-7', 0, 10, 0, 0.277533],
  ];
  for (const [id, x, n, lower, upper, published] of cases) {
    it(`${id} ${x}/${n}: ${lower} to ${upper}${published ? ` (4 dp: ${published[0]}–${published[1]})` : ''}`, () => {
      const ci = wilsonCI(x, n);
      expectNear(ci.lower, lower, printed(6));
      expectNear(ci.upper, upper, printed(6));
      if (published) {
        expectNear(ci.lower, published[0], printed(4));
        expectNear(ci.upper, published[1], printed(4));
      }
    });
  }

  it('WI-3/WI-7: x = 0 gives a lower limit of exactly 0; x = n an upper limit of exactly 1', () => {
    expect(wilsonCI(0, 20).lower).toBe(0);
    expect(wilsonCI(20, 20).upper).toBe(1);
  });

  it('[derived] x = n mirrors x = 0: 10/10 is 1 − (0/10 limits), 0.722467 to 1 (WI-7)', () => {
    const ci = wilsonCI(10, 10);
    expectNear(ci.lower, 1 - 0.277533, printed(6));
  });

  it('[derived] a higher confidence level widens the interval', () => {
    const c95 = wilsonCI(81, 263);
    const c99 = wilsonCI(81, 263, 0.99);
    expect(c99.lower).toBeLessThan(c95.lower);
    expect(c99.upper).toBeGreaterThan(c95.upper);
  });
});

describe('riskDifferenceCI, Newcombe method 10 [Newcombe 1998, Stat Med 17:873–890, Table II]', () => {
  const cases: Array<[id: string, x1: number, n1: number, x2: number, n2: number, lower: number, upper: number, published: [number, number]]> = [
    ['NC-1', 56, 70, 48, 80, 0.052431, 0.333873, [0.0524, 0.3339]],
    ['NC-2', 9, 10, 3, 10, 0.170523, 0.809018, [0.1705, 0.809]],
    ['NC-4', 5, 56, 0, 29, -0.038137, 0.19256, [-0.0381, 0.1926]],
    ['NC-6', 0, 10, 0, 10, -0.277533, 0.277533, [-0.2775, 0.2775]],
    ['NC-7', 10, 10, 0, 20, 0.679086, 1, [0.6791, 1]],
    ['NC-9 (HIV trial, WUSS 2016 SAS reference values)', 84, 101, 89, 105, -0.11775, 0.085071, [-0.1177, 0.0851]],
  ];
  for (const [id, x1, n1, x2, n2, lower, upper, published] of cases) {
    it(`${id} ${x1}/${n1} − ${x2}/${n2}: ${published[0]} to ${published[1]} (computed ${lower} to ${upper})`, () => {
      const r = riskDifferenceCI(x1, n1, x2, n2);
      expectNear(r.diff, x1 / n1 - x2 / n2, 1e-15);
      expectNear(r.lower, lower, printed(6));
      expectNear(r.upper, upper, printed(6));
      expectNear(r.lower, published[0], printed(4));
      expectNear(r.upper, published[1], printed(4));
    });
  }

  it('NC-6 [derived]: 0/10 − 0/10 is symmetric and its half-width is the Wilson upper limit of 0/10 (WI-7)', () => {
    const r = riskDifferenceCI(0, 10, 0, 10);
    expect(r.diff).toBe(0);
    expectNear(r.upper, wilsonCI(0, 10).upper, 1e-15);
    expectNear(r.lower, -r.upper, 1e-15);
  });

  it('[derived] swapping the groups negates the difference and mirrors the limits', () => {
    const a = riskDifferenceCI(56, 70, 48, 80);
    const b = riskDifferenceCI(48, 80, 56, 70);
    expectNear(b.diff, -a.diff, 1e-15);
    expectNear(b.lower, -a.upper, 1e-15);
    expectNear(b.upper, -a.lower, 1e-15);
  });
});
