import { describe, it, expect } from 'vitest';
import { jStat } from 'jstat';
import { fisherExact, chiSquare2x2, type Table2x2 } from '@/lib/stats';
import { expectNear, expectRelative, printed } from './helpers';

// Sources:
// - R-F1, R-F3: R `?fisher.test` "TeaTasting" example, matrix(c(3, 1, 1, 3), nrow = 2) (check-value file §4.2):
//   fisher.test(TeaTasting, alternative = "greater") prints p-value = 0.2429 [confirmed; PSU STAT 504 course
//   code and a second printed R session], exactly 17/70 [computed]; hypergeometric P(X = 0..4) = 1, 16, 36, 16, 1 / 70
//   [derived].
// - Convictions: R `?fisher.test` example matrix(c(2, 10, 15, 3), nrow = 2), alternative = "less",
//   p-value = 0.0004652 (R output from memory; not in the check-value file).
// - Chi-square: no 2×2 value in the check-value file; the statistics below are [derived] by hand from
//   Pearson's formula with R's Yates rule (chisq.test source: YATES = min(0.5, |O − E|)), and the p-values are
//   cross-checked against jStat.chisquare.cdf (an independent implementation, good to about 1e-10).

const TEA: Table2x2 = [
  [3, 1],
  [1, 3],
];

describe('fisherExact [R ?fisher.test]', () => {
  it('R-F1 TeaTasting, alternative "greater": p-value = 0.2429 (exactly 17/70)', () => {
    const { p } = fisherExact(TEA, { alternative: 'greater' });
    expectNear(p, 0.2429, printed(4));
    expectNear(p, 17 / 70, 1e-15);
  });

  it('R-F3 hypergeometric probabilities of the tea table, P(X = 0..4) = 1/70, 16/70, 36/70, 16/70, 1/70 [derived]', () => {
    // Tables with the tea margins (4 and 4 of 8) and top-left count a; P(X = a) = P(X ≥ a) − P(X ≥ a + 1).
    const table = (a: number): Table2x2 => [
      [a, 4 - a],
      [4 - a, a],
    ];
    const atLeast = (a: number) => (a > 4 ? 0 : fisherExact(table(a), { alternative: 'greater' }).p);
    const expected = [1, 16, 36, 16, 1].map((c) => c / 70);
    expected.forEach((probability, a) => expectNear(atLeast(a) - atLeast(a + 1), probability, 1e-15));
    expectNear(fisherExact(table(0), { alternative: 'less' }).p, 1 / 70, 1e-15);
  });

  it('R-F3 [derived] two-sided TeaTasting: tables with probability ≤ 16/70 sum to (1 + 16 + 16 + 1)/70 = 34/70', () => {
    expectNear(fisherExact(TEA).p, 34 / 70, 1e-15);
  });

  it('R-F3 [derived] "less" on the tea table is P(X ≤ 3) = 69/70', () => {
    expectNear(fisherExact(TEA, { alternative: 'less' }).p, 69 / 70, 1e-15);
  });

  it('Convictions (R ?fisher.test), alternative "less": p-value = 0.0004652 (from memory)', () => {
    const { p } = fisherExact(
      [
        [2, 15],
        [10, 3],
      ],
      { alternative: 'less' },
    );
    expectNear(p, 0.0004652, printed(7));
  });

  it('[derived] the most probable table gives two-sided p = 1; a single-table support gives 1', () => {
    expectNear(
      fisherExact([
        [2, 2],
        [2, 2],
      ]).p,
      1,
      1e-15,
    );
    expect(
      fisherExact([
        [0, 5],
        [0, 7],
      ]).p,
    ).toBe(1);
  });

  it('[derived] two-sided p is the sum over the support of hypergeometric terms no larger than the observed one', () => {
    // Margins: column 1 = 7, column 2 = 11, row 1 = 8; observed top-left a = 1. Terms C(7,s)C(11,8−s)/C(18,8).
    const choose = (n: number, k: number): number => {
      let r = 1;
      for (let i = 1; i <= k; i++) r = (r * (n - k + i)) / i;
      return r;
    };
    const terms = Array.from({ length: 8 }, (_, s) => (choose(7, s) * choose(11, 8 - s)) / choose(18, 8));
    const observed = terms[1];
    const expected = terms.filter((t) => t <= observed * (1 + 1e-7)).reduce((a, b) => a + b, 0);
    expectRelative(
      fisherExact([
        [1, 7],
        [6, 4],
      ]).p,
      expected,
      1e-13,
    );
  });
});

describe('chiSquare2x2 [derived from Pearson’s statistic with R’s Yates rule]', () => {
  it('tea table without correction: E = 2 in every cell, X² = 4·1²/2 = 2, df 1', () => {
    const r = chiSquare2x2(TEA, false);
    expect(r.statistic).toBe(2);
    expect(r.df).toBe(1);
    expectNear(r.p, 1 - jStat.chisquare.cdf(2, 1), 1e-9);
  });

  it('tea table with Yates: |O − E| = 1, correction 0.5, X² = 4·0.5²/2 = 0.5 (the default)', () => {
    const r = chiSquare2x2(TEA);
    expect(r.statistic).toBe(0.5);
    expectNear(r.p, 1 - jStat.chisquare.cdf(0.5, 1), 1e-9);
  });

  it('Yates correction is min(0.5, |O − E|): when |O − E| < 0.5 the corrected statistic is 0 and p = 1', () => {
    // [[2, 2], [2, 3]]: E11 = 4·4/9, |O − E| = 2/9 < 0.5.
    const r = chiSquare2x2([
      [2, 2],
      [2, 3],
    ]);
    expectNear(r.statistic, 0, 1e-15);
    expectNear(r.p, 1, 1e-7);
  });

  it('uncorrected X² equals the square of the pooled two-proportion z statistic [derived identity]', () => {
    // 30/50 vs 18/60: pooled p = 48/110.
    const p1 = 30 / 50;
    const p2 = 18 / 60;
    const pooled = 48 / 110;
    const z = (p1 - p2) / Math.sqrt(pooled * (1 - pooled) * (1 / 50 + 1 / 60));
    const r = chiSquare2x2(
      [
        [30, 20],
        [18, 42],
      ],
      false,
    );
    expectRelative(r.statistic, z * z, 1e-13);
    expectRelative(r.p, 1 - jStat.chisquare.cdf(z * z, 1), 1e-8);
  });

  it('small p-values do not underflow (§4.1: 1 − jStat.chisquare.cdf returns 0 for large statistics)', () => {
    // [[60, 10], [10, 60]]: E = 35, |O − E| = 25, Yates X² = 4·24.5²/35 = 68.6.
    const r = chiSquare2x2([
      [60, 10],
      [10, 60],
    ]);
    expectRelative(r.statistic, 68.6, 1e-14);
    expect(1 - jStat.chisquare.cdf(68.6, 1)).toBeLessThan(1e-15);
    expect(r.p).toBeGreaterThan(1e-16);
    expect(r.p).toBeLessThan(1.3e-16);
  });
});
