/**
 * Outcome scoring for hand-therapy follow-up visits: total active motion (TAM) of a finger,
 * TAM as a percentage of normal, the TAM grade, QuickDASH, DASH, the DASH optional modules
 * and the grip-strength ratio.
 *
 * Rounding: no function here rounds its result. Scores are returned at full floating-point
 * precision and the presenter rounds for display (use `roundTo`). Grading (`tamGrade`) works
 * on the unrounded percentage; a protocol that grades the displayed (rounded) value must
 * round before calling it.
 *
 * Every function validates its input and throws `InvalidInputError` (naming the offending
 * item) instead of returning a misleading number.
 */

/** Raised for input a person must correct; the API layer maps it to HTTP 400. */
export class InvalidInputError extends Error {
  code = 'invalid_input' as const;
}

// ---------------------------------------------------------------------------
// Shared validation
// ---------------------------------------------------------------------------

function shown(value: unknown): string {
  if (typeof value === 'number') return String(value);
  if (value === undefined) return 'nothing';
  if (value === null) return 'null';
  if (typeof value === 'string') return `the text "${value}"`;
  return `a value of type ${typeof value}`;
}

function requireFinite(value: unknown, label: string, unit?: string): number {
  if (typeof value !== 'number' || !Number.isFinite(value)) {
    const inUnit = unit ? ` in ${unit}` : '';
    throw new InvalidInputError(`${label} must be a finite number${inUnit} (got ${shown(value)}).`);
  }
  return value;
}

// ---------------------------------------------------------------------------
// Total active motion
// ---------------------------------------------------------------------------

/** Goniometry of one finger, in degrees. Extension deficit: degrees short of full extension; negative = hyperextension. */
export interface FingerMotion {
  mcpFlexion: number;
  pipFlexion: number;
  dipFlexion: number;
  mcpExtensionDeficit: number;
  pipExtensionDeficit: number;
  dipExtensionDeficit: number;
}

/**
 * Plausibility limit per joint, in degrees, for active flexion and for an extension deficit or
 * hyperextension (common practice, no source). Normal finger flexion is 90–100° per joint, so
 * anything beyond 120° is a data-entry error rather than a measurement.
 */
export const MAX_JOINT_DEGREES = 120;

/** Upper plausibility limit for a finger's TAM: three joints at the per-joint limit (common practice, no source). */
export const MAX_TAM_DEGREES = 3 * MAX_JOINT_DEGREES;

/** Normal reference TAM of a finger, used when no contralateral finger is usable (check value TAM-N1, ASSH). */
export const NORMAL_TAM_DEGREES = 260;

const JOINTS = [
  { key: 'mcp', name: 'MCP' },
  { key: 'pip', name: 'PIP' },
  { key: 'dip', name: 'DIP' },
] as const;

/** TAM in degrees: (MCP + PIP + DIP active flexion) − (their extension deficits); hyperextension counts as 0 deficit. */
export function totalActiveMotion(j: FingerMotion): number {
  if (typeof j !== 'object' || j === null) {
    throw new InvalidInputError('Finger goniometry must be given as an object with flexion and extension-deficit values.');
  }
  let flexionSum = 0;
  let deficitSum = 0;
  for (const { key, name } of JOINTS) {
    const flexion = requireFinite(j[`${key}Flexion` as const], `${name} flexion`, 'degrees');
    const deficit = requireFinite(j[`${key}ExtensionDeficit` as const], `${name} extension deficit`, 'degrees');
    if (flexion < 0) {
      throw new InvalidInputError(`${name} flexion must not be negative (got ${flexion}°).`);
    }
    if (flexion > MAX_JOINT_DEGREES) {
      throw new InvalidInputError(`${name} flexion of ${flexion}° is above the plausible maximum of ${MAX_JOINT_DEGREES}°.`);
    }
    if (Math.abs(deficit) > MAX_JOINT_DEGREES) {
      throw new InvalidInputError(
        `${name} extension deficit of ${deficit}° is outside the plausible range of −${MAX_JOINT_DEGREES}° to ${MAX_JOINT_DEGREES}°.`,
      );
    }
    // Hyperextension is recorded as a negative deficit; it is neither subtracted nor added to
    // the flexion sum (TAM-N2, common practice, no source).
    const effectiveDeficit = Math.max(0, deficit);
    // The joint's most extended position cannot lie beyond its most flexed one; a deficit larger
    // than the flexion means the two fields were swapped or one was mistyped.
    if (effectiveDeficit > flexion) {
      throw new InvalidInputError(
        `${name} extension deficit (${deficit}°) is larger than ${name} flexion (${flexion}°); please check both values.`,
      );
    }
    flexionSum += flexion;
    deficitSum += effectiveDeficit;
  }
  return flexionSum - deficitSum;
}

/** Injured finger's TAM as a percentage of the contralateral finger's TAM, or of 260° when that is null or 0. */
export function tamPercent(injured: number, contralateral: number | null): number {
  const inj = requireFinite(injured, 'Injured-finger TAM', 'degrees');
  if (inj < 0 || inj > MAX_TAM_DEGREES) {
    throw new InvalidInputError(`Injured-finger TAM must be between 0° and ${MAX_TAM_DEGREES}° (got ${inj}°).`);
  }
  let reference = NORMAL_TAM_DEGREES;
  if (contralateral !== null) {
    const contra = requireFinite(contralateral, 'Contralateral-finger TAM', 'degrees');
    if (contra < 0 || contra > MAX_TAM_DEGREES) {
      throw new InvalidInputError(`Contralateral-finger TAM must be between 0° and ${MAX_TAM_DEGREES}° (got ${contra}°).`);
    }
    // A contralateral TAM of 0 cannot serve as the normal (the finger is itself stiff or absent),
    // so the normal reference is used instead, as when it was never measured.
    if (contra > 0) reference = contra;
  }
  // Multiply before dividing so that exact ratios (e.g. 195/260) give exactly 75, not 74.999…,
  // which matters at the grade boundaries.
  return (inj * 100) / reference;
}

/** Grade thresholds in percent of normal TAM. */
export interface TamBands {
  excellent: number;
  good: number;
  fair: number;
}

export type TamGrade = 'excellent' | 'good' | 'fair' | 'poor';

/**
 * Default grade thresholds, after the ASSH TAM classification (ASSH-C1..C4). The source does not
 * say which grade exactly 75 %, exactly 50 % or 75–<100 % belong to; the platform's boundary rule
 * (common practice, no source) is: excellent ≥ 100, good > 75, fair > 50, otherwise poor.
 */
export const ASSH_TAM_BANDS: Readonly<TamBands> = Object.freeze({ excellent: 100, good: 75, fair: 50 });

/** Grade a TAM percentage: excellent if ≥ bands.excellent, good if > bands.good, fair if > bands.fair, else poor. */
export function tamGrade(percent: number, bands: TamBands = ASSH_TAM_BANDS): TamGrade {
  const p = requireFinite(percent, 'TAM percentage', 'percent');
  if (p < 0) throw new InvalidInputError(`TAM percentage must not be negative (got ${p}).`);
  if (typeof bands !== 'object' || bands === null) {
    throw new InvalidInputError('TAM grade bands must be an object with excellent, good and fair thresholds.');
  }
  const excellent = requireFinite(bands.excellent, 'The excellent threshold of the TAM grade bands', 'percent');
  const good = requireFinite(bands.good, 'The good threshold of the TAM grade bands', 'percent');
  const fair = requireFinite(bands.fair, 'The fair threshold of the TAM grade bands', 'percent');
  if (fair < 0) throw new InvalidInputError(`The fair threshold of the TAM grade bands must not be negative (got ${fair}).`);
  if (!(excellent > good && good > fair)) {
    throw new InvalidInputError(
      `TAM grade bands must descend (excellent > good > fair); got excellent ${excellent}, good ${good}, fair ${fair}.`,
    );
  }
  // The top band includes its threshold (reaching normal is excellent); the lower bands exclude
  // theirs, so exactly 75 % is fair and exactly 50 % is poor under the default bands.
  if (p >= excellent) return 'excellent';
  if (p > good) return 'good';
  if (p > fair) return 'fair';
  return 'poor';
}

// ---------------------------------------------------------------------------
// QuickDASH, DASH and the DASH optional modules
// ---------------------------------------------------------------------------

/** One questionnaire's responses in item order; null marks an unanswered item. */
export type ItemResponses = readonly (number | null)[];

/** Number of items and the most that may be missing for a score to be calculated. */
interface Instrument {
  name: string;
  items: number;
  maxMissing: number;
}

const QUICKDASH: Instrument = { name: 'QuickDASH', items: 11, maxMissing: 1 };
const DASH: Instrument = { name: 'DASH', items: 30, maxMissing: 3 };
const DASH_MODULE: Instrument = { name: 'DASH optional module', items: 4, maxMissing: 0 };

/** Score = (sum of answered items / number answered − 1) × 25, on 0–100; null when too many items are missing. */
function scoreLikert(instrument: Instrument, responses: ItemResponses): number | null {
  if (!Array.isArray(responses)) {
    throw new InvalidInputError(`${instrument.name} responses must be a list of ${instrument.items} items.`);
  }
  if (responses.length !== instrument.items) {
    throw new InvalidInputError(
      `${instrument.name} needs exactly ${instrument.items} items (got ${responses.length}).`,
    );
  }
  let sum = 0;
  let answered = 0;
  // Index loop rather than forEach so that holes in a sparse list are seen and rejected.
  for (let i = 0; i < responses.length; i++) {
    const code: unknown = responses[i];
    if (code === null) continue;
    if (typeof code !== 'number' || !Number.isInteger(code) || code < 1 || code > 5) {
      throw new InvalidInputError(
        `${instrument.name} item ${i + 1} must be a whole number from 1 to 5, or empty if unanswered (got ${shown(code)}).`,
      );
    }
    sum += code;
    answered++;
  }
  if (instrument.items - answered > instrument.maxMissing) return null;
  // Algebraically (sum / n − 1) × 25; written as one division of exact integers so the result is
  // the correctly rounded true score (e.g. exactly 42.5 rather than 42.50000000000001).
  return ((sum - answered) * 25) / answered;
}

/** QuickDASH disability/symptom score (0–100) from 11 items coded 1–5; null when more than 1 item is missing. */
export function quickDash(responses: ItemResponses): number | null {
  return scoreLikert(QUICKDASH, responses);
}

/** DASH disability/symptom score (0–100) from 30 items coded 1–5; null when more than 3 items are missing. */
export function dash(responses: ItemResponses): number | null {
  return scoreLikert(DASH, responses);
}

/** Work or sports/performing-arts module score (0–100) from 4 items coded 1–5; null when any item is missing. */
export function dashModule(responses: ItemResponses): number | null {
  return scoreLikert(DASH_MODULE, responses);
}

// ---------------------------------------------------------------------------
// Grip strength
// ---------------------------------------------------------------------------

function meanOfTrials(trials: readonly number[], hand: string): number {
  if (!Array.isArray(trials) || trials.length === 0) {
    throw new InvalidInputError(`Grip strength of the ${hand} hand needs at least one trial.`);
  }
  let sum = 0;
  for (let i = 0; i < trials.length; i++) {
    const label = `Grip trial ${i + 1} of the ${hand} hand`;
    const kg = requireFinite(trials[i], label, 'kilograms');
    if (kg < 0) throw new InvalidInputError(`${label} must not be negative (got ${kg} kg).`);
    sum += kg;
  }
  return sum / trials.length;
}

/** Grip-strength ratio: mean of the affected hand's trials as a percentage of the mean of the unaffected hand's trials. */
export function gripRatio(affectedKg: readonly number[], unaffectedKg: readonly number[]): number {
  const affected = meanOfTrials(affectedKg, 'affected');
  const unaffected = meanOfTrials(unaffectedKg, 'unaffected');
  if (unaffected <= 0) {
    throw new InvalidInputError('Grip strength of the unaffected hand must be above 0 kg on average to serve as the reference.');
  }
  return (affected * 100) / unaffected;
}

// ---------------------------------------------------------------------------
// Presentation helper
// ---------------------------------------------------------------------------

/** Shift a number's decimal point by `places`, working on its shortest decimal text so no binary noise is added. */
function shiftDecimal(value: number, places: number): number {
  const [mantissa, exponent = '0'] = String(value).split('e');
  return Number(`${mantissa}e${Number(exponent) + places}`);
}

/** Round to `dp` decimal places (0–15), halves away from zero, as the number is written (1.005 → 1.01). */
export function roundTo(x: number, dp: number): number {
  const value = requireFinite(x, 'The value to round');
  if (typeof dp !== 'number' || !Number.isInteger(dp) || dp < 0 || dp > 15) {
    throw new InvalidInputError(`Decimal places must be a whole number from 0 to 15 (got ${shown(dp)}).`);
  }
  // Rounding the magnitude makes halves go away from zero for negative numbers too.
  const magnitude = shiftDecimal(Math.round(shiftDecimal(Math.abs(value), dp)), -dp);
  const rounded = value < 0 ? -magnitude : magnitude;
  // Avoid returning −0 (e.g. for −0.04 to 1 place), which would display as "-0".
  return rounded === 0 ? 0 : rounded;
}
