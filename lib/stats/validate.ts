/**
 * Input checks shared by the statistics functions. Each throws InvalidInputError with a message that
 * names the offending item, so the API layer can answer HTTP 400 with something a person can act on.
 */
import { InvalidInputError } from './errors';

/** How a value looks in an error message. */
export function shown(value: unknown): string {
  if (typeof value === 'number') return String(value);
  if (value === undefined) return 'nothing';
  if (value === null) return 'null';
  if (typeof value === 'string') return `the text "${value}"`;
  if (Array.isArray(value)) return 'a list';
  return `a value of type ${typeof value}`;
}

/** A finite number, or throw naming `label`. */
export function requireFinite(value: unknown, label: string): number {
  if (typeof value !== 'number' || !Number.isFinite(value)) {
    throw new InvalidInputError(`${label} must be a finite number (got ${shown(value)}).`);
  }
  return value;
}

/** The message with its first letter in upper case (labels such as "sample a" start sentences). */
function sentence(text: string): string {
  return text.charAt(0).toUpperCase() + text.slice(1);
}

/** A sample of at least `minLength` finite numbers; the message names the first bad item (1-based). */
export function requireSample(values: unknown, label: string, minLength: number, why = ''): number[] {
  if (!Array.isArray(values)) {
    throw new InvalidInputError(sentence(`${label} must be a list of numbers (got ${shown(values)}).`));
  }
  values.forEach((value, i) => {
    if (typeof value !== 'number' || !Number.isFinite(value)) {
      throw new InvalidInputError(`Item ${i + 1} of ${label} must be a finite number (got ${shown(value)}).`);
    }
  });
  if (values.length < minLength) {
    const need = minLength === 1 ? 'at least one value' : `at least ${minLength} values`;
    throw new InvalidInputError(sentence(`${label} needs ${need}${why} (got ${values.length}).`));
  }
  return values as number[];
}

/** A whole number ≥ `min`, or throw naming `label`. */
export function requireCount(value: unknown, label: string, min = 0): number {
  const n = requireFinite(value, label);
  if (!Number.isInteger(n) || n < min) {
    const what = min === 0 ? 'a whole number, 0 or more' : `a whole number, ${min} or more`;
    throw new InvalidInputError(`${label} must be ${what} (got ${n}).`);
  }
  return n;
}

/** A probability strictly between 0 and 1 (a confidence level, a significance level, a power). */
export function requireOpenUnit(value: unknown, label: string): number {
  const p = requireFinite(value, label);
  if (!(p > 0 && p < 1)) {
    throw new InvalidInputError(`${label} must lie strictly between 0 and 1 (got ${p}).`);
  }
  return p;
}

/** A probability in [0, 1] (a proportion, a quantile level). */
export function requireUnit(value: unknown, label: string): number {
  const p = requireFinite(value, label);
  if (!(p >= 0 && p <= 1)) {
    throw new InvalidInputError(`${label} must lie between 0 and 1 (got ${p}).`);
  }
  return p;
}

/** A strictly positive finite number (a standard deviation, degrees of freedom). */
export function requirePositive(value: unknown, label: string): number {
  const x = requireFinite(value, label);
  if (!(x > 0)) throw new InvalidInputError(`${label} must be greater than 0 (got ${x}).`);
  return x;
}

/** One of the allowed strings, or throw listing them. */
export function requireChoice<T extends string>(value: unknown, allowed: readonly T[], label: string): T {
  if (typeof value !== 'string' || !(allowed as readonly string[]).includes(value)) {
    throw new InvalidInputError(`${label} must be one of ${allowed.map((a) => `"${a}"`).join(', ')} (got ${shown(value)}).`);
  }
  return value as T;
}

/** An options argument: undefined (all defaults) or a plain object. */
export function requireOptions<T extends object>(value: T | undefined, label: string): Partial<T> {
  if (value === undefined) return {};
  if (value === null || typeof value !== 'object' || Array.isArray(value)) {
    throw new InvalidInputError(`${label} must be an object (got ${shown(value)}).`);
  }
  return value;
}
