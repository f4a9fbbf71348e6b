import { describe, it, expect } from 'vitest';
import { quickDash, dash, dashModule } from '@/lib/scoring';
import { expectClose, expectInvalid } from './helpers';

// Sources for the check values in this file:
// - QD-F1: QuickDASH score = (sum of n completed / n − 1) × 25, items 1–5. Institute for Work & Health (IWH)
//   QuickDASH form, scoring box (via secondary scoring guides, e.g. Physiopedia "DASH Outcome Measure").
// - QD-M1: at least 10 of 11 items. Gummesson C, Ward MM, Atroshi I, BMC Musculoskelet Disord 2006;7:44, Methods.
// - QD-R1: range 0–100. IWH; Gummesson et al. 2006.
// - DASH-F1 / DASH-M1: IWH "Scoring the DASH" (revised method 2002, 2010 sheet), scoring formula and missing-item rule.
// - DASH-F2: WSCC Clinics protocol "How to score the DASH": (sum − 30) / 1.2 when all 30 are answered.
// - MOD-F1 / MOD-M1: IWH "Scoring the DASH", optional modules section.
// - QD-N2: IWH, module scores are never combined with the main score.
// - QD-E*, DASH-E1, MOD-E*: worked examples derived from those formulas (no source prints item-level examples).

describe('quickDash', () => {
  it('QD-E1: 2,3,1,4,2,3,1,2,5,3,2 (sum 28, n 11) scores (28/11 − 1) × 25 = 38.636… [IWH QuickDASH scoring box, QD-F1]', () => {
    expectClose(quickDash([2, 3, 1, 4, 2, 3, 1, 2, 5, 3, 2]), (28 / 11 - 1) * 25);
    expectClose(quickDash([2, 3, 1, 4, 2, 3, 1, 2, 5, 3, 2]), 38.63636363636363);
  });

  it('QD-E3: two of 11 items missing is not calculable [Gummesson, Ward & Atroshi 2006, BMC Musculoskelet Disord 7:44, Methods, QD-M1]', () => {
    expect(quickDash([3, 3, 2, 4, null, 2, 1, null, 4, 2, 3])).toBeNull();
  });

  it('QD-E4: all 1 / all 3 / all 5 score 0 / 50 / 100, the ends of the 0–100 range [IWH; Gummesson et al. 2006, QD-R1]', () => {
    expect(quickDash(Array(11).fill(1))).toBe(0);
    expect(quickDash(Array(11).fill(3))).toBe(50);
    expect(quickDash(Array(11).fill(5))).toBe(100);
  });

  it('QD-M1: one missing item is still scored, dividing by the 10 answered, not 11 [Gummesson et al. 2006, Methods; IWH, QD-F1]', () => {
    // QD-E1 with item 5 (a 2) left blank: sum 26 over 10 answered → (2.6 − 1) × 25 = 40.
    // Dividing by 11 would give 34.09…; scoring the blank as 0 is ruled out because 0 is not a valid code.
    expectClose(quickDash([2, 3, 1, 4, null, 3, 1, 2, 5, 3, 2]), (26 / 10 - 1) * 25);
    expectClose(quickDash([2, 3, 1, 4, null, 3, 1, 2, 5, 3, 2]), 40);
  });

  it('QD-M1: all 11 missing is not calculable [Gummesson et al. 2006, Methods]', () => {
    expect(quickDash(Array(11).fill(null))).toBeNull();
  });

  it('QD-N1: a score whose exact value is 42.5 comes out as 42.5 (no binary noise such as 42.50000000000001) [common practice, no source]', () => {
    // 10 answered, sum 27 (one item blank): (27/10 − 1) × 25 = 42.5 by QD-F1.
    const score = quickDash([3, 3, 3, 3, 3, 3, 3, 2, 2, 2, null]);
    expectClose(score, 42.5);
    expect(score).toBe(42.5);
  });

  it('QD-N2: a module appended to the 11 items is rejected, not scored together [IWH, module scores are separate]', () => {
    expectInvalid(() => quickDash([2, 3, 1, 4, 2, 3, 1, 2, 5, 3, 2, 2, 3, 2, 3]), /QuickDASH needs exactly 11 items \(got 15\)/);
  });
});

describe('dash', () => {
  const dashE1 = [2, 2, 3, 3, 2, 1, 4, 4, 2, 3, 3, 4, 2, 3, 3, 2, 1, 3, 4, 2, 2, 3, 3, 3, 4, 4, 3, 3, 4, 4];

  it('DASH-E1: the 30 listed responses sum to 86 [derived example]', () => {
    expect(dashE1).toHaveLength(30);
    expect(dashE1.reduce((a, b) => a + b, 0)).toBe(86);
  });

  it('DASH-E1: scores (86/30 − 1) × 25 = 46.666… [IWH "Scoring the DASH" 2010 sheet, DASH-F1]', () => {
    expectClose(dash(dashE1), (86 / 30 - 1) * 25);
    expectClose(dash(dashE1), 46.666666666666664);
  });

  it('DASH-F2 / DASH-E1: equals the all-answered shortcut (86 − 30) / 1.2 [WSCC Clinics "How to score the DASH"]', () => {
    expectClose(dash(dashE1), (86 - 30) / 1.2);
  });

  it('DASH-M1: three missing items are still scored over the 27 answered [IWH "Scoring the DASH", missing-item rule; DASH-F1]', () => {
    // DASH-E1 with items 1–3 (2, 2, 3) blank: sum 79 over 27 answered.
    const threeMissing = [null, null, null, ...dashE1.slice(3)];
    expectClose(dash(threeMissing), (79 / 27 - 1) * 25);
  });

  it('DASH-M1: four missing items is not calculable [IWH "Scoring the DASH", at least 27 of 30]', () => {
    const fourMissing = [null, null, null, null, ...dashE1.slice(4)];
    expect(dash(fourMissing)).toBeNull();
  });

  it('DASH-F1: all 1 / all 5 score 0 / 100 [IWH "Scoring the DASH"]', () => {
    expect(dash(Array(30).fill(1))).toBe(0);
    expect(dash(Array(30).fill(5))).toBe(100);
  });
});

describe('dashModule', () => {
  it('MOD-E1: work module 2,3,2,3 (sum 10) scores (10/4 − 1) × 25 = 37.5 [IWH "Scoring the DASH", optional modules, MOD-F1]', () => {
    expectClose(dashModule([2, 3, 2, 3]), 37.5);
  });

  it('MOD-E4: either module 4,5,4,5 (sum 18) scores 87.5 [IWH "Scoring the DASH", optional modules, MOD-F1]', () => {
    expectClose(dashModule([4, 5, 4, 5]), 87.5);
  });

  it('MOD-M1: any missing module item gives no score [IWH "Scoring the DASH", optional modules]', () => {
    expect(dashModule([2, 3, null, 3])).toBeNull();
    expect(dashModule([null, 5, 4, 5])).toBeNull();
    expect(dashModule([null, null, null, null])).toBeNull();
  });

  it('QD-N2: the 11 main items are not accepted as a module [IWH, module scores are separate]', () => {
    expectInvalid(() => dashModule([2, 3, 1, 4, 2, 3, 1, 2, 5, 3, 2]), /module needs exactly 4 items \(got 11\)/);
  });
});
