import { describe, it, expect } from 'vitest';
import { jStat } from 'jstat';
import { mannWhitney, wilcoxonSignedRank } from '@/lib/stats';
import { expectNear, expectRelative, printed } from './helpers';

// Sources (check-value file §4.2, "Wilcoxon examples"): R `?wilcox.test` examples, data from Hollander M,
// Wolfe DA. Nonparametric Statistical Methods, 1973 (depression scale, pairs x/y; permeability constants x/y).
// R-W1, R-W2, R-W4 printed output [confirmed]; exact p-values as fractions [computed] by enumeration.
// The Mann–Whitney U identity and the minimal exact case are from §4.2 "Mann–Whitney U equivalence" ([derived]).
// Printed p-values are checked to half a unit in their last printed digit; exact fractions to 1e-14.
// Normal-approximation cases without a published value are [derived] from R's formulas (wilcox.test source):
// z = (S − E − CORRECTION)/σ with CORRECTION = sign(S − E)·0.5 (two-sided) and the tie-corrected σ; the
// reference p uses jStat.normal.cdf, an implementation independent of the module's own normal tail.

const X1 = [1.83, 0.5, 1.62, 2.48, 1.68, 1.88, 1.55, 3.06, 1.3];
const Y1 = [0.878, 0.647, 0.598, 2.05, 1.06, 1.29, 1.06, 3.14, 1.29];
const X4 = [0.8, 0.83, 1.89, 1.04, 1.45, 1.38, 1.91, 1.64, 0.73, 1.46];
const Y4 = [1.15, 0.88, 0.9, 0.74, 1.21];

const pnorm = (z: number) => jStat.normal.cdf(z, 0, 1);

describe('wilcoxonSignedRank [R ?wilcox.test, Hollander & Wolfe 1973]', () => {
  it('R-W1 paired, alternative "greater": V = 40, p-value = 0.01953 (exact 10/512)', () => {
    const r = wilcoxonSignedRank(X1, { y: Y1, alternative: 'greater' });
    expect(r.V).toBe(40);
    expect(r.exact).toBe(true);
    expectNear(r.p, 0.01953, printed(5));
    expectNear(r.p, 10 / 512, 1e-14);
  });

  it('R-W1 two-sided 20/512 and "less" 505/512 [computed by enumeration]', () => {
    expectNear(wilcoxonSignedRank(X1, { y: Y1 }).p, 20 / 512, 1e-14);
    expectNear(wilcoxonSignedRank(X1, { y: Y1, alternative: 'less' }).p, 505 / 512, 1e-14);
  });

  it('R-W2 wilcox.test(y − x, alternative = "less"): V = 5 (= 45 − 40), p-value = 0.01953', () => {
    const r = wilcoxonSignedRank(
      Y1.map((v, i) => v - X1[i]),
      { alternative: 'less' },
    );
    expect(r.V).toBe(5);
    expectNear(r.p, 0.01953, printed(5));
    expectNear(r.p, 10 / 512, 1e-14);
  });

  it('[derived] mu shifts the differences: x vs y with mu equals (x − y − mu) alone', () => {
    const d = X1.map((v, i) => v - Y1[i] - 0.1);
    const withMu = wilcoxonSignedRank(X1, { y: Y1, mu: 0.1 });
    const plain = wilcoxonSignedRank(d);
    expect(withMu.V).toBe(plain.V);
    expect(withMu.p).toBe(plain.p);
  });

  it('[derived] zeros are dropped and force the normal approximation; tied |d| use the tie-corrected variance', () => {
    // d = 1, −2, 2, 3, 0, 4 → nonzero n = 5, |d| ranks 1, 2.5, 2.5, 4, 5; V = 1 + 2.5 + 4 + 5 = 12.5; E = 7.5;
    // σ² = 5·6·11/24 − (2³ − 2)/48 = 13.625; z = (12.5 − 7.5 − 0.5)/√13.625.
    const r = wilcoxonSignedRank([1, -2, 2, 3, 0, 4]);
    expect(r.V).toBe(12.5);
    expect(r.exact).toBe(false);
    const z = 4.5 / Math.sqrt(13.625);
    expectRelative(r.p, 2 * pnorm(-z), 1e-13);
  });

  it('[derived] exact: true with ties still uses the normal approximation, as R does', () => {
    const r = wilcoxonSignedRank([1, -2, 2, 3, 4], { exact: true });
    expect(r.exact).toBe(false);
  });

  it('[derived] exact: false on R-W1 gives the continuity-corrected normal p for "greater"', () => {
    // n = 9, E = 22.5, σ² = 9·10·19/24 = 71.25; z = (40 − 22.5 − 0.5)/√71.25.
    const r = wilcoxonSignedRank(X1, { y: Y1, alternative: 'greater', exact: false });
    expect(r.exact).toBe(false);
    expectRelative(r.p, 1 - pnorm(17 / Math.sqrt(71.25)), 1e-12);
    const uncorrected = wilcoxonSignedRank(X1, { y: Y1, alternative: 'greater', exact: false, correct: false });
    expectRelative(uncorrected.p, 1 - pnorm(17.5 / Math.sqrt(71.25)), 1e-12);
  });

  it('[derived] from n = 50 nonzero differences the default is the normal approximation', () => {
    const d = Array.from({ length: 50 }, (_, i) => (i % 3 === 0 ? -(i + 1) : i + 1));
    expect(wilcoxonSignedRank(d).exact).toBe(false);
    expect(wilcoxonSignedRank(d.slice(0, 49)).exact).toBe(true);
  });

  it('[derived] exact distribution for n = 3: V ∈ {0,1,2,3,3,4,5,6}, so P(V ≥ 6) = 1/8 and two-sided 2/8', () => {
    expectNear(wilcoxonSignedRank([1, 2, 3], { alternative: 'greater' }).p, 1 / 8, 1e-15);
    expectNear(wilcoxonSignedRank([1, 2, 3]).p, 2 / 8, 1e-15);
    // V = 3 sits at the centre n(n+1)/4: two-sided p is capped at 1.
    expect(wilcoxonSignedRank([-1, -2, 3]).p).toBe(1);
  });
});

describe('mannWhitney [R ?wilcox.test, Hollander & Wolfe 1973]', () => {
  it('R-W4 wilcox.test(x, y, alternative = "g"): W = 35, p-value = 0.1272 (exact 382/3003)', () => {
    const r = mannWhitney(X4, Y4, { alternative: 'greater' });
    expect(r.W).toBe(35);
    expect(r.exact).toBe(true);
    expectNear(r.p, 0.1272, printed(4));
    expectNear(r.p, 382 / 3003, 1e-14);
  });

  it('R-W4 two-sided exact p = 764/3003 = 0.2544 [computed; §4.2 U equivalence]', () => {
    const r = mannWhitney(X4, Y4);
    expectNear(r.p, 0.2544, printed(4));
    expectNear(r.p, 764 / 3003, 1e-14);
  });

  it('§4.2 U equivalence: W is U of the first sample, U_x = R_x − n_x(n_x + 1)/2 = 90 − 55 = 35; U_y = 50 − 35 = 15', () => {
    expect(mannWhitney(X4, Y4).W).toBe(90 - 55);
    const swapped = mannWhitney(Y4, X4, { alternative: 'less' });
    expect(swapped.W).toBe(15);
    expectNear(swapped.p, 382 / 3003, 1e-14);
    expectNear(mannWhitney(Y4, X4).p, 764 / 3003, 1e-14);
  });

  it('§4.2 R-W4/R-W5: normal approximation without continuity correction, "greater": p = 0.1103', () => {
    const r = mannWhitney(X4, Y4, { alternative: 'greater', exact: false, correct: false });
    expect(r.exact).toBe(false);
    expectNear(r.p, 0.1103, printed(4));
  });

  it('§4.2 minimal exact case: x = {1,2,3}, y = {4,5,6} → U_x = 0, two-sided p = 2/20 = 0.1 [derived]', () => {
    const r = mannWhitney([1, 2, 3], [4, 5, 6]);
    expect(r.W).toBe(0);
    expectNear(r.p, 0.1, 1e-15);
    expectNear(mannWhitney([1, 2, 3], [4, 5, 6], { alternative: 'less' }).p, 1 / 20, 1e-15);
  });

  it('[derived] mu is subtracted from the first sample before ranking', () => {
    const r = mannWhitney(X4.map((v) => v + 10), Y4, { mu: 10, alternative: 'greater' });
    expect(r.W).toBe(35);
    expectNear(r.p, 382 / 3003, 1e-14);
  });

  it('[derived] ties: average ranks and the tie-corrected normal approximation', () => {
    // Combined 1,2,2,3 | 2,3,4,4 → ranks x: 1, 3, 3, 5.5 → R_x = 12.5, W = 12.5 − 10 = 2.5; E = 8.
    // Tie groups 1, 3, 2, 2 → Σ(t³ − t) = 36; σ² = (16/12)(9 − 36/56); z = (2.5 − 8 + 0.5)/σ.
    const r = mannWhitney([1, 2, 2, 3], [2, 3, 4, 4]);
    expect(r.W).toBe(2.5);
    expect(r.exact).toBe(false);
    const sigma = Math.sqrt((16 / 12) * (9 - 36 / 56));
    expectRelative(r.p, 2 * pnorm(-5 / sigma), 1e-13);
  });

  it('[derived] samples of 50 use the normal approximation by default; 49 and 49 are still exact', () => {
    const a = Array.from({ length: 50 }, (_, i) => 2 * i);
    const b = Array.from({ length: 50 }, (_, i) => 2 * i + 1.5);
    expect(mannWhitney(a, b).exact).toBe(false);
    const exact = mannWhitney(a.slice(0, 49), b.slice(0, 49));
    expect(exact.exact).toBe(true);
    // Both methods agree to about the size of the normal approximation's error at this n.
    expectNear(exact.p, mannWhitney(a.slice(0, 49), b.slice(0, 49), { exact: false }).p, 2e-3);
  });

  it('[derived] an exact two-sided p at the centre of the distribution is capped at 1', () => {
    expect(mannWhitney([1, 4], [2, 3]).p).toBe(1);
  });
});
