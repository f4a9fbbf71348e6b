import { expect } from 'vitest';
import { InvalidInputError } from '@/lib/stats';

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

/** Assert |actual − expected| ≤ tolerance. */
export function expectNear(actual: number, expected: number, tolerance: number): void {
  expect(Number.isFinite(actual)).toBe(true);
  expect(Math.abs(actual - expected), `actual ${actual}, expected ${expected}`).toBeLessThanOrEqual(tolerance);
}

/** Assert |actual − expected| / |expected| ≤ tolerance (expected ≠ 0). */
export function expectRelative(actual: number, expected: number, tolerance: number): void {
  expect(Number.isFinite(actual)).toBe(true);
  const error = Math.abs(actual - expected) / Math.abs(expected);
  expect(error, `actual ${actual}, expected ${expected}, relative error ${error}`).toBeLessThanOrEqual(tolerance);
}

/** Half a unit in the last printed decimal place: the tolerance for a value printed with `decimals` decimals. */
export function printed(decimals: number): number {
  return 0.5 * 10 ** -decimals;
}
