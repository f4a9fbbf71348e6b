/**
 * Statistics for study reports: descriptive summaries, t tests, Wilcoxon rank tests, 2×2 table tests,
 * proportion intervals and sample-size planning, each matching the definition R uses.
 *
 * Every function is pure and validates its input, throwing `InvalidInputError` (naming the offending
 * item) instead of returning a misleading number. Nothing here rounds; presenters round for display.
 */
export { InvalidInputError } from './errors';
export { describe, quantile, lag1Autocorrelation, type Description } from './descriptive';
export {
  welchTTest,
  studentTTest,
  pairedTTest,
  oneSampleTTest,
  type Alternative,
  type TTestOptions,
  type TTestResult,
} from './ttest';
export {
  mannWhitney,
  wilcoxonSignedRank,
  type RankTestOptions,
  type SignedRankOptions,
  type MannWhitneyResult,
  type SignedRankResult,
} from './rank';
export { fisherExact, chiSquare2x2, type Table2x2, type FisherOptions } from './tables';
export { wilsonCI, riskDifferenceCI } from './proportions';
export {
  powerTTest,
  powerPropTest,
  sampleSizeTwoMeans,
  sampleSizeTwoProportions,
  type PowerAlternative,
  type SampleSize,
} from './power';
export {
  normalCdf,
  normalUpperTail,
  normalQuantile,
  studentTCdf,
  studentTUpperTail,
  studentTQuantile,
  noncentralTCdf,
  chiSquareQuantile,
  chiSquare1UpperTail,
  fQuantile,
} from './distributions';
