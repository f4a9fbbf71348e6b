import { describe, it, expect } from 'vitest';
import {
  InvalidInputError,
  describe as describeSample,
  quantile,
  lag1Autocorrelation,
  welchTTest,
  studentTTest,
  pairedTTest,
  oneSampleTTest,
  mannWhitney,
  wilcoxonSignedRank,
  fisherExact,
  chiSquare2x2,
  wilsonCI,
  riskDifferenceCI,
  sampleSizeTwoMeans,
  sampleSizeTwoProportions,
  powerTTest,
  powerPropTest,
  normalQuantile,
  studentTQuantile,
  studentTCdf,
  noncentralTCdf,
  chiSquareQuantile,
  fQuantile,
  type Table2x2,
} from '@/lib/stats';
import { expectInvalid } from './helpers';

// Every invalid input must throw InvalidInputError (code 'invalid_input') with a message naming the offending
// item, so the API layer can return HTTP 400 with something a person can act on. Inputs arrive from JSON,
// so the cases include wrongly typed values passed through `as never`.

const A = [1, 2, 3, 4];
const B = [2, 3, 5, 8];
const TEA: Table2x2 = [
  [3, 1],
  [1, 3],
];

type Case = [name: string, run: () => unknown, message: RegExp];

const CASES: Case[] = [
  // describe / quantile / autocorrelation
  ['describe: empty list', () => describeSample([]), /^The list of values needs at least 2 values for a standard deviation \(got 0\)\.$/],
  ['describe: one value (n < 2 for an SD)', () => describeSample([5]), /at least 2 values .*got 1/],
  ['describe: NaN names the item', () => describeSample([1, Number.NaN, 3]), /^Item 2 of the list of values must be a finite number \(got NaN\)\.$/],
  ['describe: Infinity', () => describeSample([1, 2, Infinity]), /Item 3 .*Infinity/],
  ['describe: a numeric string', () => describeSample([1, '2' as never]), /Item 2 .*the text "2"/],
  ['describe: not a list', () => describeSample(null as never), /^The list of values must be a list of numbers \(got null\)/],
  ['quantile: empty list', () => quantile([], 0.5), /needs at least one value/],
  ['quantile: p above 1', () => quantile(A, 1.5), /quantile level p must lie between 0 and 1 \(got 1.5\)/],
  ['quantile: negative p', () => quantile(A, -0.1), /between 0 and 1/],
  ['quantile: NaN p in a list names its position', () => quantile(A, [0.5, Number.NaN]), /Quantile level 2 must be a finite number/],
  ['lag1Autocorrelation: constant values', () => lag1Autocorrelation([2, 2, 2]), /all values are equal/],
  ['lag1Autocorrelation: one value', () => lag1Autocorrelation([2]), /at least 2 values/],

  // t tests
  ['welchTTest: empty sample a', () => welchTTest([], B), /^Sample a needs at least 2 values for a Welch t test \(got 0\)\.$/],
  ['welchTTest: one value in sample b', () => welchTTest(A, [1]), /^Sample b needs at least 2 values .*got 1/],
  ['welchTTest: NaN in sample b', () => welchTTest(A, [1, Number.NaN]), /Item 2 of sample b must be a finite number \(got NaN\)/],
  ['welchTTest: constant data', () => welchTTest([1, 1, 1], [1, 1, 1]), /essentially constant/],
  ['welchTTest: unknown alternative', () => welchTTest(A, B, { alternative: 'two.sided' as never }), /alternative must be one of "two-sided", "less", "greater"/],
  ['welchTTest: confidence level 95', () => welchTTest(A, B, { confLevel: 95 }), /confidence level must lie strictly between 0 and 1 \(got 95\)/],
  ['welchTTest: confidence level 1', () => welchTTest(A, B, { confLevel: 1 }), /strictly between 0 and 1/],
  ['welchTTest: NaN mu', () => welchTTest(A, B, { mu: Number.NaN }), /hypothesised value mu must be a finite number/],
  ['welchTTest: options not an object', () => welchTTest(A, B, 'paired' as never), /options must be an object/],
  ['studentTTest: two values in all', () => studentTTest([1], [2]), /at least 3 values in the two samples together \(got 2\)/],
  ['studentTTest: empty sample b', () => studentTTest(A, []), /^Sample b needs at least one value/],
  ['pairedTTest: unequal lengths', () => pairedTTest(A, [1, 2, 3]), /equal length \(sample a has 4, sample b has 3\)/],
  ['pairedTTest: identical differences', () => pairedTTest([1, 2, 3], [0, 1, 2]), /essentially constant/],
  ['oneSampleTTest: one value', () => oneSampleTTest([3]), /^The sample needs at least 2 values/],
  ['oneSampleTTest: all zeros', () => oneSampleTTest([0, 0, 0]), /essentially constant/],

  // rank tests
  ['mannWhitney: empty sample a', () => mannWhitney([], B), /^Sample a needs at least one value/],
  ['mannWhitney: NaN in sample a', () => mannWhitney([1, Number.NaN], B), /Item 2 of sample a/],
  ['mannWhitney: all values equal', () => mannWhitney([2, 2], [2, 2, 2]), /All values in the two samples are equal/],
  ['mannWhitney: exact not a boolean', () => mannWhitney(A, B, { exact: 'yes' as never }), /exact option must be true or false/],
  ['mannWhitney: correct not a boolean', () => mannWhitney(A, B, { correct: 1 as never }), /correct option must be true or false/],
  ['mannWhitney: exact count too costly', () => mannWhitney(Array.from({ length: 400 }, (_, i) => i), Array.from({ length: 400 }, (_, i) => i + 0.5), { exact: true }), /too costly to count; use exact: false/],
  ['wilcoxonSignedRank: empty', () => wilcoxonSignedRank([]), /^The sample needs at least one value/],
  ['wilcoxonSignedRank: all differences zero', () => wilcoxonSignedRank([0, 0]), /Every difference equals mu/],
  ['wilcoxonSignedRank: all equal to mu', () => wilcoxonSignedRank([3, 3], { mu: 3 }), /Every difference equals mu/],
  ['wilcoxonSignedRank: paired lengths differ', () => wilcoxonSignedRank(A, { y: [1, 2] }), /equal length \(sample x has 4, sample y has 2\)/],
  ['wilcoxonSignedRank: NaN in y', () => wilcoxonSignedRank(A, { y: [1, 2, 3, Number.NaN] }), /Item 4 of sample y/],
  ['wilcoxonSignedRank: Infinity mu', () => wilcoxonSignedRank(A, { mu: Infinity }), /shift mu must be a finite number/],

  // 2×2 tables
  ['fisherExact: negative count', () => fisherExact([[3, -1], [1, 3]]), /count in row 1, column 2 must be a whole number, 0 or more \(got -1\)/],
  ['fisherExact: fractional count', () => fisherExact([[3, 1], [1.5, 3]]), /row 2, column 1 must be a whole number/],
  ['fisherExact: NaN count', () => fisherExact([[Number.NaN, 1], [1, 3]]), /row 1, column 1 must be a finite number \(got NaN\)/],
  ['fisherExact: not 2×2', () => fisherExact([[3, 1, 2], [1, 3]] as never), /two rows of two counts/],
  ['fisherExact: empty table', () => fisherExact([[0, 0], [0, 0]]), /no observations/],
  ['fisherExact: unknown alternative', () => fisherExact(TEA, { alternative: 'up' as never }), /alternative must be one of/],
  ['chiSquare2x2: negative count', () => chiSquare2x2([[3, 1], [1, -3]]), /row 2, column 2 must be a whole number, 0 or more \(got -3\)/],
  ['chiSquare2x2: empty column', () => chiSquare2x2([[0, 4], [0, 5]]), /total of column 1 is 0/],
  ['chiSquare2x2: empty row', () => chiSquare2x2([[0, 0], [2, 5]]), /total of row 1 is 0/],
  ['chiSquare2x2: correct not a boolean', () => chiSquare2x2(TEA, 'yes' as never), /correct argument must be true or false/],

  // proportions
  ['wilsonCI: x > n', () => wilsonCI(11, 10), /successes x \(11\) cannot exceed the number of trials n \(10\)/],
  ['wilsonCI: negative x', () => wilsonCI(-1, 10), /successes x must be a whole number, 0 or more \(got -1\)/],
  ['wilsonCI: n = 0', () => wilsonCI(0, 0), /trials n must be a whole number, 1 or more \(got 0\)/],
  ['wilsonCI: fractional n', () => wilsonCI(1, 2.5), /trials n must be a whole number/],
  ['wilsonCI: NaN x', () => wilsonCI(Number.NaN, 10), /successes x must be a finite number \(got NaN\)/],
  ['wilsonCI: confidence level 0', () => wilsonCI(1, 10, 0), /confidence level must lie strictly between 0 and 1/],
  ['riskDifferenceCI: x2 > n2', () => riskDifferenceCI(5, 10, 12, 11), /successes x2 \(12\) cannot exceed the number of trials n2 \(11\)/],
  ['riskDifferenceCI: negative n1', () => riskDifferenceCI(0, -5, 1, 10), /trials n1 must be a whole number, 1 or more/],
  ['riskDifferenceCI: negative x1', () => riskDifferenceCI(-2, 5, 1, 10), /successes x1 must be a whole number, 0 or more/],

  // power and sample size
  ['sampleSizeTwoMeans: delta 0', () => sampleSizeTwoMeans({ delta: 0, sd: 1 }), /delta must not be 0/],
  ['sampleSizeTwoMeans: sd 0', () => sampleSizeTwoMeans({ delta: 1, sd: 0 }), /standard deviation sd must be greater than 0 \(got 0\)/],
  ['sampleSizeTwoMeans: sd missing', () => sampleSizeTwoMeans({ delta: 1 } as never), /standard deviation sd must be a finite number \(got nothing\)/],
  ['sampleSizeTwoMeans: power 1', () => sampleSizeTwoMeans({ delta: 1, sd: 1, power: 1 }), /power must lie strictly between 0 and 1 \(got 1\)/],
  ['sampleSizeTwoMeans: alpha 5 (percent)', () => sampleSizeTwoMeans({ delta: 1, sd: 1, alpha: 5 }), /significance level alpha must lie strictly between 0 and 1 \(got 5\)/],
  ['sampleSizeTwoMeans: unknown alternative', () => sampleSizeTwoMeans({ delta: 1, sd: 1, alternative: 'greater' as never }), /alternative must be one of "two-sided", "one-sided"/],
  ['sampleSizeTwoMeans: effect too small', () => sampleSizeTwoMeans({ delta: 1e-4, sd: 1 }), /more than 10 million per group/],
  ['sampleSizeTwoMeans: settings not an object', () => sampleSizeTwoMeans(undefined as never), /settings must be an object \(got nothing\)/],
  ['powerTTest: n below 2', () => powerTTest({ n: 1.5, delta: 1, sd: 1 }), /number per group n must be at least 2 \(got 1.5\)/],
  ['powerTTest: NaN delta', () => powerTTest({ n: 10, delta: Number.NaN, sd: 1 }), /difference delta must be a finite number/],
  ['sampleSizeTwoProportions: equal proportions', () => sampleSizeTwoProportions({ p1: 0.4, p2: 0.4 }), /must differ/],
  ['sampleSizeTwoProportions: p1 above 1', () => sampleSizeTwoProportions({ p1: 40, p2: 0.5 }), /proportion p1 must lie between 0 and 1 \(got 40\)/],
  ['sampleSizeTwoProportions: no variance', () => sampleSizeTwoProportions({ p1: 0, p2: 1 }), /cannot both be 0 or 1/],
  ['powerPropTest: n below 1', () => powerPropTest({ n: 0, p1: 0.5, p2: 0.75 }), /number per group n must be at least 1 \(got 0\)/],
  ['powerPropTest: negative p2', () => powerPropTest({ n: 10, p1: 0.5, p2: -0.1 }), /proportion p2 must lie between 0 and 1/],

  // distribution helpers
  ['normalQuantile: p = 0', () => normalQuantile(0), /probability p must lie strictly between 0 and 1 \(got 0\)/],
  ['studentTQuantile: df 0', () => studentTQuantile(0.975, 0), /degrees of freedom must be greater than 0 \(got 0\)/],
  ['studentTCdf: NaN t', () => studentTCdf(Number.NaN, 5), /t must be a number \(got NaN\)/],
  ['noncentralTCdf: NaN ncp', () => noncentralTCdf(1, 5, Number.NaN), /noncentrality parameter must be a finite number/],
  ['chiSquareQuantile: p = 1', () => chiSquareQuantile(1, 3), /strictly between 0 and 1 \(got 1\)/],
  ['fQuantile: negative df2', () => fQuantile(0.95, 2, -3), /denominator degrees of freedom must be greater than 0 \(got -3\)/],
];

describe('invalid input throws InvalidInputError naming the offending item', () => {
  for (const [name, run, message] of CASES) {
    it(name, () => expectInvalid(run, message));
  }

  it('InvalidInputError carries the code the API layer maps to HTTP 400', () => {
    const error = new InvalidInputError('x');
    expect(error).toBeInstanceOf(Error);
    expect(error.code).toBe('invalid_input');
    expect(error.name).toBe('InvalidInputError');
  });
});
