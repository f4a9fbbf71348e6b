import { describe, it, expect } from 'vitest';
import { welchTTest, studentTTest, pairedTTest, oneSampleTTest, type TTestResult } from '@/lib/stats';
import { expectNear, expectRelative, printed } from './helpers';

// Sources (check-value file §4.2, "R documentation worked examples"):
// - R-T1, R-T3: R `?t.test` examples on the `sleep` data (Cushny & Peebles), printed output [confirmed] in
//   ≥ 8 public printed R sessions; the "computed" values are jstat 1.9.6 + the file's own formulas.
// - R-T5, R-T6: R `?t.test` examples t.test(1:10, y = c(7:20)) and with 200 added; help-page comments
//   "P = .00001855" [confirmed] and "P = .1245" (from memory); the other printed digits of R-T5 from memory.
// Tolerances: printed values to half a unit in their last printed digit; the computed t and df (plain
// arithmetic) to 1e-12 relative; the computed p to 1e-8 relative and limits to 1e-7, because jstat's t CDF
// and inverse are only good to about 1e-9 and 1e-8 (§4.1) while these functions evaluate them to full precision.

const GROUP1 = [0.7, -1.6, -0.2, -1.2, -0.1, 3.4, 3.7, 0.8, 0.0, 2.0];
const GROUP2 = [1.9, 0.8, 1.1, 0.1, -0.1, 4.4, 5.5, 1.6, 4.6, 3.4];
const range = (from: number, to: number) => Array.from({ length: to - from + 1 }, (_, i) => from + i);

function expectResult(
  r: TTestResult,
  computed: { t: number; df: number; p: number; ci: [number, number] },
): void {
  expectRelative(r.t, computed.t, 1e-12);
  expectRelative(r.df, computed.df, 1e-12);
  expectRelative(r.p, computed.p, 1e-8);
  expectNear(r.ci95[0], computed.ci[0], 1e-7);
  expectNear(r.ci95[1], computed.ci[1], 1e-7);
}

describe('welchTTest [R ?t.test examples]', () => {
  it('R-T1 sleep, Welch: t = −1.8608, df = 17.776, p = 0.07939, 95% CI −3.3654832 to 0.2054832, means 0.75 and 2.33', () => {
    const r = welchTTest(GROUP1, GROUP2);
    expectNear(r.t, -1.8608, printed(4));
    expectNear(r.df, 17.776, printed(3));
    expectNear(r.p, 0.07939, printed(5));
    expectNear(r.ci95[0], -3.3654832, printed(7));
    expectNear(r.ci95[1], 0.2054832, printed(7));
    expectNear(r.meanDiff, 0.75 - 2.33, 1e-15);
    expectResult(r, {
      t: -1.8608134674868526,
      df: 17.776473516178495,
      p: 0.0793941403537773,
      ci: [-3.3654832103645944, 0.20548321036459538],
    });
  });

  it('R-T5 t.test(1:10, y = 7:20): p = .00001855 (help page); t = −5.4349, df = 21.982, CI −11.052802 to −4.947198', () => {
    const r = welchTTest(range(1, 10), range(7, 20));
    expectNear(r.p, 1.855e-5, printed(8));
    expectNear(r.t, -5.4349, printed(4));
    expectNear(r.df, 21.982, printed(3));
    expectNear(r.ci95[0], -11.052802, printed(6));
    expectNear(r.ci95[1], -4.947198, printed(6));
    expectResult(r, {
      t: -5.4349297638940595,
      df: 21.98221234018899,
      p: 1.8552818324781067e-5,
      ci: [-11.052801711147042, -4.947198288852958],
    });
    expect(r.meanDiff).toBe(5.5 - 13.5);
  });

  it('R-T6 t.test(1:10, y = c(7:20, 200)): p = .1245 "NOT significant anymore" (comment from memory)', () => {
    const r = welchTTest(range(1, 10), [...range(7, 20), 200]);
    expectNear(r.p, 0.1245, printed(4));
    expectRelative(r.t, -1.6329026332012053, 1e-12);
    expectRelative(r.df, 14.164598953012472, 1e-12);
    expectRelative(r.p, 0.1245134981650508, 1e-8);
  });

  it('[derived] one-sided R-T1: p("less") = p/2, p("greater") = 1 − p/2; the one-sided 95% limit is the two-sided 90% one', () => {
    const two = welchTTest(GROUP1, GROUP2);
    const less = welchTTest(GROUP1, GROUP2, { alternative: 'less' });
    const greater = welchTTest(GROUP1, GROUP2, { alternative: 'greater' });
    const ninety = welchTTest(GROUP1, GROUP2, { confLevel: 0.9 });
    expectRelative(less.p, two.p / 2, 1e-14);
    expectRelative(greater.p, 1 - two.p / 2, 1e-14);
    expect(less.ci95[0]).toBe(-Infinity);
    expectNear(less.ci95[1], ninety.ci95[1], 1e-12);
    expect(greater.ci95[1]).toBe(Infinity);
    expectNear(greater.ci95[0], ninety.ci95[0], 1e-12);
  });

  it('[derived] a hypothesised difference mu shifts t but not meanDiff or the interval', () => {
    const base = welchTTest(GROUP1, GROUP2);
    const shifted = welchTTest(GROUP1, GROUP2, { mu: -1.58 });
    expectNear(shifted.t, 0, 1e-14);
    expectNear(shifted.p, 1, 1e-14);
    expect(shifted.meanDiff).toBe(base.meanDiff);
    expectNear(shifted.ci95[0], base.ci95[0], 1e-12);
    expectNear(shifted.ci95[1], base.ci95[1], 1e-12);
  });

  it('a wider confidence level gives a wider interval around the same difference', () => {
    const r95 = welchTTest(GROUP1, GROUP2);
    const r99 = welchTTest(GROUP1, GROUP2, { confLevel: 0.99 });
    expect(r99.ci95[0]).toBeLessThan(r95.ci95[0]);
    expect(r99.ci95[1]).toBeGreaterThan(r95.ci95[1]);
    expectNear((r99.ci95[0] + r99.ci95[1]) / 2, r95.meanDiff, 1e-12);
  });
});

describe('studentTTest', () => {
  // var.equal = TRUE on the sleep data: R prints t = −1.8608, df = 18, p-value = 0.07919, 95% CI −3.363874 to
  // 0.203874 (from memory; not in the check-value file). With equal group sizes the pooled and Welch standard
  // errors coincide, so t equals R-T1's t exactly [derived].
  it('sleep data, pooled variance: t as R-T1, df 18, p = 0.07919, CI −3.363874 to 0.203874 (R output from memory)', () => {
    const r = studentTTest(GROUP1, GROUP2);
    expectRelative(r.t, -1.8608134674868526, 1e-12);
    expect(r.df).toBe(18);
    expectNear(r.p, 0.07919, printed(5));
    expectNear(r.ci95[0], -3.363874, printed(6));
    expectNear(r.ci95[1], 0.203874, printed(6));
  });

  it('[derived] unequal sizes: pooled SE √(((n1−1)s1² + (n2−1)s2²)/(n1+n2−2)·(1/n1 + 1/n2))', () => {
    // a = 1, 2, 3 (mean 2, var 1); b = 2, 4, 6, 8 (mean 5, var 20/3): pooled = (2·1 + 3·20/3)/5 = 22/5.
    const r = studentTTest([1, 2, 3], [2, 4, 6, 8]);
    const se = Math.sqrt((22 / 5) * (1 / 3 + 1 / 4));
    expectRelative(r.t, -3 / se, 1e-14);
    expect(r.df).toBe(5);
  });

  it('[derived] a sample of one value is allowed (as in R) and contributes no variance term', () => {
    // b = 2, 4, 6 (var 4): pooled = 2·4/2 = 4; se = √(4·(1 + 1/3)).
    const r = studentTTest([10], [2, 4, 6]);
    expectRelative(r.t, 6 / Math.sqrt(4 * (4 / 3)), 1e-14);
    expect(r.df).toBe(2);
  });
});

describe('pairedTTest [R ?t.test examples]', () => {
  it('R-T3 sleep, paired: t = −4.0621, df = 9, p = 0.002833, CI −2.4598858 to −0.7001142, mean difference −1.58', () => {
    const r = pairedTTest(GROUP1, GROUP2);
    expectNear(r.t, -4.0621, printed(4));
    expect(r.df).toBe(9);
    expectNear(r.p, 0.002833, printed(6));
    expectNear(r.ci95[0], -2.4598858, printed(7));
    expectNear(r.ci95[1], -0.7001142, printed(7));
    expectNear(r.meanDiff, -1.58, 1e-15);
    expectResult(r, {
      t: -4.062127683382037,
      df: 9,
      p: 0.002832890199987305,
      ci: [-2.459885761495747, -0.7001142385042535],
    });
  });
});

describe('oneSampleTTest', () => {
  const differences = GROUP1.map((v, i) => v - GROUP2[i]);

  it('R-T3 [derived]: the one-sample test on the differences is the paired test', () => {
    const one = oneSampleTTest(differences);
    const paired = pairedTTest(GROUP1, GROUP2);
    expect(one.t).toBe(paired.t);
    expect(one.p).toBe(paired.p);
    expect(one.ci95).toEqual(paired.ci95);
  });

  it('[derived] with mu, meanDiff and ci95 are for mean(x) − mu; R’s printed interval is ci95 + mu', () => {
    const plain = oneSampleTTest(GROUP2);
    const r = oneSampleTTest(GROUP2, { mu: 2 });
    const squares = GROUP2.reduce((s, v) => s + (v - 2.33) ** 2, 0);
    const se = Math.sqrt(squares / 9 / 10);
    expectNear(r.meanDiff, 2.33 - 2, 1e-14);
    expectRelative(r.t, (2.33 - 2) / se, 1e-12);
    expect(r.df).toBe(9);
    expectNear(r.ci95[0] + 2, plain.ci95[0], 1e-12);
    expectNear(r.ci95[1] + 2, plain.ci95[1], 1e-12);
  });

  it('[derived] one-sided "greater" about mu: p is half the two-sided p when t > 0', () => {
    const two = oneSampleTTest(GROUP2, { mu: 1 });
    const greater = oneSampleTTest(GROUP2, { mu: 1, alternative: 'greater' });
    expect(two.t).toBeGreaterThan(0);
    expectRelative(greater.p, two.p / 2, 1e-14);
    expect(greater.ci95[1]).toBe(Infinity);
  });
});
