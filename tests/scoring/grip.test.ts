import { describe, it, expect } from 'vitest';
import { gripRatio } from '@/lib/scoring';
import { expectClose } from './helpers';

// No published check value exists for the ratio itself; these are derived from its definition:
// mean of the affected hand's trials as a percentage of the mean of the unaffected hand's trials.

describe('gripRatio', () => {
  it('three trials each: mean 22 kg of mean 44 kg is 50 %', () => {
    expectClose(gripRatio([20, 22, 24], [40, 44, 48]), 50);
  });

  it('one trial each: 30 kg of 40 kg is 75 %', () => {
    expect(gripRatio([30], [40])).toBe(75);
  });

  it('uses the mean of the trials, not the best trial or the sum, and allows different trial counts', () => {
    // Affected mean (10 + 20 + 30) / 3 = 20; unaffected mean (38 + 42) / 2 = 40 → 50 %.
    expectClose(gripRatio([10, 20, 30], [38, 42]), 50);
  });

  it('accepts more than three trials', () => {
    expectClose(gripRatio([10, 12, 14, 16], [26, 26, 26, 26]), 50);
  });

  it('an affected hand with no measurable grip (0 kg) is 0 %', () => {
    expect(gripRatio([0, 0, 0], [35, 36, 37])).toBe(0);
  });

  it('an affected hand stronger than the unaffected one exceeds 100 %', () => {
    expectClose(gripRatio([45], [40]), 112.5);
  });
});
