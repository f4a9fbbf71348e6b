import { expect } from 'vitest';
import { InvalidInputError } from '@/lib/scoring';

/** Assert that `run` throws an InvalidInputError whose message matches `message` (the offending item). */
export function expectInvalid(run: () => unknown, message: RegExp): void {
  let caught: unknown;
  try {
    run();
  } catch (error) {
    caught = error;
  }
  expect(caught).toBeInstanceOf(InvalidInputError);
  const error = caught as InvalidInputError;
  expect(error.code).toBe('invalid_input');
  expect(error.message).toMatch(message);
}

/** Tolerance for floating-point comparison of scores (check value QD-N1 advises one, e.g. 1e-9). */
export const TOLERANCE = 1e-9;

/** Assert |actual − expected| ≤ TOLERANCE, with a readable failure message. */
export function expectClose(actual: number | null, expected: number): void {
  expect(actual).not.toBeNull();
  expect(Math.abs((actual as number) - expected)).toBeLessThanOrEqual(TOLERANCE);
}
