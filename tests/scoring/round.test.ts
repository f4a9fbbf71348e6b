import { describe, it, expect } from 'vitest';
import { roundTo, quickDash, dash } from '@/lib/scoring';
import { expectInvalid } from './helpers';

// Rounding is a presentation step: the check values say no rounding rule is published and 1 or 2 decimals are
// usual (QD-N1, common practice, no source). roundTo rounds halves away from zero, as the number is written.

describe('roundTo', () => {
  it('QD-E1 to one decimal is 38.6 [IWH QuickDASH scoring box, QD-F1; rounding QD-N1, common practice]', () => {
    expect(roundTo(quickDash([2, 3, 1, 4, 2, 3, 1, 2, 5, 3, 2]) as number, 1)).toBe(38.6);
  });

  it('DASH-E1 to two decimals is 46.67 [IWH "Scoring the DASH" 2010 sheet, DASH-F1; rounding QD-N1, common practice]', () => {
    const dashE1 = [2, 2, 3, 3, 2, 1, 4, 4, 2, 3, 3, 4, 2, 3, 3, 2, 1, 3, 4, 2, 2, 3, 3, 3, 4, 4, 3, 3, 4, 4];
    expect(roundTo(dash(dashE1) as number, 2)).toBe(46.67);
  });

  const cases: ReadonlyArray<[x: number, dp: number, expected: number]> = [
    [1.005, 2, 1.01], // naive Math.round(x * 100) / 100 gives 1
    [2.5, 0, 3],
    [-2.5, 0, -3], // halves away from zero (Math.round alone gives −2)
    [42.50000000000001, 0, 43],
    [12.25, 1, 12.3],
    [83.01886792452831, 2, 83.02],
    [0, 3, 0],
    [7, 0, 7],
    [1e-7, 2, 0],
    [1.5e-7, 7, 2e-7],
    [1.23e21, 0, 1.23e21],
    [99.995, 2, 100],
  ];
  it.each(cases)('roundTo(%d, %d) = %d', (x, dp, expected) => {
    expect(roundTo(x, dp)).toBe(expected);
  });

  it('never returns negative zero', () => {
    expect(Object.is(roundTo(-0.04, 1), 0)).toBe(true);
    expect(Object.is(roundTo(-0, 2), 0)).toBe(true);
  });

  const badDp: ReadonlyArray<number> = [-1, 1.5, 16, Number.NaN, Number.POSITIVE_INFINITY];
  it.each(badDp)('rejects %d decimal places', (dp) => {
    expectInvalid(() => roundTo(1.234, dp), /Decimal places must be a whole number from 0 to 15/);
  });

  const badX: ReadonlyArray<number> = [Number.NaN, Number.POSITIVE_INFINITY, Number.NEGATIVE_INFINITY];
  it.each(badX)('rejects %d as the value to round', (x) => {
    expectInvalid(() => roundTo(x, 1), /value to round must be a finite number/);
  });
});
