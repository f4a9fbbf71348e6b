// Hand-therapy rehabilitation programmes after flexor tendon repair: a typed description of a
// programme (phases, splint, exercise prescriptions, progression rules) and pure functions that
// validate it, apply progression findings, find the phase in force on a day, count prescribed
// sessions, compute adherence from session logs and check a logged session against the programme.
//
// Day numbering: post-operative day, the day of repair is day 0 (the same convention as the visit
// schedule). Post-operative weeks: day 0 is week 0; days 1–7 are week 1, days 8–14 week 2, and so on
// (week = ceil(day / 7)). With this numbering "at four weeks" is day 28, the last day of week 4, which
// is how the programmes below write their phase boundaries ("splint off after four weeks" = day 29).
//
// These cores describe what a protocol prescribes so that delivered therapy can be recorded and
// compared with it. They give no clinical advice; loads and progressions belong to the protocol and
// the treating clinician.

export { PROGRAMMES } from './programmes';
export {
  fourHourlyDorsalBlock,
  hourlyPassiveThenPlaceHold,
  minimalActiveTension,
  elasticTractionPalmarPulley,
  EPM,
  EAM,
} from './programmes';

/** Raised for arguments a person has to correct; the API layer turns it into HTTP 400. */
export class InvalidInputError extends Error {
  code = 'invalid_input' as const;
  constructor(message: string) {
    super(message);
    this.name = 'InvalidInputError';
  }
}

/** Exercise codes, identical to the `kind` code list of the therapy_session CRF. */
export const EXERCISE_KINDS = [
  'passive_flexion',
  'active_extension',
  'place_and_hold',
  'active_flexion',
  'tenodesis',
  'tendon_gliding',
  'resisted',
] as const;

export type ExerciseKind = (typeof EXERCISE_KINDS)[number];

/** Display names of the exercise codes, as titled on the therapy_session CRF. */
export const EXERCISE_LABELS: Record<ExerciseKind, string> = {
  passive_flexion: 'Passive flexion',
  active_extension: 'Active extension (within the splint)',
  place_and_hold: 'Place and hold',
  active_flexion: 'Active flexion',
  tenodesis: 'Tenodesis (wrist-finger) exercise',
  tendon_gliding: 'Tendon gliding',
  resisted: 'Resisted exercise',
};

/**
 * A splint as worn in a phase.
 * - wristAngleDeg: wrist position held by the splint in degrees; negative = flexion, positive =
 *   extension, 0 = neutral. For a hinged wrist splint it is the extension stop of the hinge.
 * - mcpFlexionDeg: flexion of the metacarpophalangeal joints held by the dorsal hood (0 = straight).
 * - hoursPerDay: hours a day the splint is worn; 0 with type 'none'.
 */
export interface Splint {
  type: 'dorsal_blocking' | 'hinged_wrist' | 'none' | (string & {});
  wristAngleDeg: number;
  mcpFlexionDeg: number;
  hoursPerDay: number;
}

/** How often an exercise is done: a number of sessions a day, or every N hours while awake. */
export type Frequency = { sessionsPerDay: number } | { everyHours: number; wakingHours?: number };

/** One exercise of a phase: what, how many repetitions, how long each hold, how often. */
export interface Prescription {
  kind: ExerciseKind;
  repetitions: number;
  holdSeconds?: number;
  frequency: Frequency;
  /** Done only with the therapist (never at home alone). */
  supervisedOnly?: boolean;
}

/** A stage of the programme over an inclusive range of post-op days. */
export interface Phase {
  key: string;
  label: string;
  fromDay: number;
  /** Last post-op day of the phase, inclusive; null = open-ended (only the last phase). */
  toDay: number | null;
  /** The splint worn in the phase (between exercise sessions when an exercise splint is given too). */
  splint: Splint;
  /** A second splint put on only for the exercise sessions, such as a hinged wrist splint for place-and-hold. */
  exerciseSplint?: Splint;
  exercises: Prescription[];
}

export type ProgressionEffect = { extendPhase: string; byDays: number } | { skipToPhase: string };

/** "At day N, if tendon glide is poor (or good), do this to the phase boundaries." */
export interface ProgressionRule {
  id: string;
  atDay: number;
  condition: { measure: 'tendon_glide'; is: 'poor' | 'good' };
  effect: ProgressionEffect;
  note: string;
}

/** A rehabilitation programme, optionally tied to a study arm. */
export interface Programme {
  key: string;
  arm?: string;
  label: string;
  description: string;
  phases: Phase[];
  progression: ProgressionRule[];
}

/** One logged exercise session. */
export interface SessionLog {
  postOpDay: number;
  exercises: { kind: ExerciseKind; repetitions: number }[];
  /** The session was done with the therapist; absent counts as not recorded as supervised. */
  supervised?: boolean;
}

/** A clinical finding that decides progression rules. */
export interface ProgressionFinding {
  measure: 'tendon_glide';
  value: 'poor' | 'good';
  atDay: number;
}

export interface ApplyProgressionOptions {
  /** How many days either side of a rule's day a finding may lie and still decide it (default 3). */
  findingWindowDays?: number;
}

export interface AdherenceWeek {
  /** Post-op week: 0 for day 0, ceil(day / 7) from day 1. */
  week: number;
  /** First and last day of the week inside the requested range. */
  fromDay: number;
  toDay: number;
  prescribed: number;
  logged: number;
  /** logged / prescribed × 100, unrounded; null when nothing was prescribed. */
  percent: number | null;
}

export interface AdherenceReport {
  weeks: AdherenceWeek[];
  total: { prescribed: number; logged: number; percent: number | null };
}

export interface SessionFlag {
  kind: ExerciseKind;
  reason: string;
}

/** Waking hours a day assumed for "every N hours" prescriptions when none is given (common practice). */
export const DEFAULT_WAKING_HOURS = 16;

/**
 * Days either side of a progression rule's day within which a finding decides it. Three days is the
 * window of the week-4 visit in the demo schedule (day 28 ± 3), so the week-4 assessment decides a
 * day-28 rule even when it was a few days early or late.
 */
export const DEFAULT_FINDING_WINDOW_DAYS = 3;

/** Latest post-op day any programme, rule or log may refer to (two years). */
export const MAX_POST_OP_DAY = 730;

const SPLINT_TYPES_NONE = 'none';

function fail(message: string): never {
  throw new InvalidInputError(message);
}

function isRecord(v: unknown): v is Record<string, unknown> {
  return typeof v === 'object' && v !== null && !Array.isArray(v);
}

function isInt(v: unknown): v is number {
  return typeof v === 'number' && Number.isInteger(v);
}

function isFiniteNumber(v: unknown): v is number {
  return typeof v === 'number' && Number.isFinite(v);
}

function isNonEmptyString(v: unknown): v is string {
  return typeof v === 'string' && v.trim().length > 0;
}

function show(v: unknown): string {
  if (v === undefined) return 'nothing';
  if (typeof v === 'number') return String(v);
  try {
    return JSON.stringify(v) ?? String(v);
  } catch {
    return String(v);
  }
}

function isExerciseKind(v: unknown): v is ExerciseKind {
  return typeof v === 'string' && (EXERCISE_KINDS as readonly string[]).includes(v);
}

function checkPostOpDay(v: unknown, what: string): number {
  if (!isInt(v) || v < 0 || v > MAX_POST_OP_DAY) {
    fail(`${what} must be a whole post-op day from 0 to ${MAX_POST_OP_DAY}, got ${show(v)}.`);
  }
  return v;
}

function phaseDays(ph: Pick<Phase, 'fromDay' | 'toDay'>): string {
  return ph.toDay === null ? `from day ${ph.fromDay}` : `days ${ph.fromDay}–${ph.toDay}`;
}

function validateFrequency(f: unknown, where: string): void {
  if (!isRecord(f)) fail(`${where}: frequency must be { sessionsPerDay } or { everyHours }, got ${show(f)}.`);
  const hasSessions = 'sessionsPerDay' in f;
  const hasHours = 'everyHours' in f;
  if (hasSessions === hasHours) {
    fail(`${where}: frequency must give either sessionsPerDay or everyHours (exactly one), got ${show(f)}.`);
  }
  if (hasSessions) {
    const n = f.sessionsPerDay;
    if (!isInt(n) || n < 1 || n > 24) fail(`${where}: sessionsPerDay must be a whole number from 1 to 24, got ${show(n)}.`);
    return;
  }
  const every = f.everyHours;
  if (!isFiniteNumber(every) || every <= 0 || every > 24) {
    fail(`${where}: everyHours must be more than 0 and at most 24, got ${show(every)}.`);
  }
  const waking = f.wakingHours ?? DEFAULT_WAKING_HOURS;
  if (!isFiniteNumber(waking) || waking <= 0 || waking > 24) {
    fail(`${where}: wakingHours must be more than 0 and at most 24, got ${show(f.wakingHours)}.`);
  }
  if (every > waking) {
    fail(`${where}: every ${every} hours within ${waking} waking hours gives no session at all.`);
  }
}

function validatePrescription(x: unknown, where: string): void {
  if (!isRecord(x)) fail(`${where}: an exercise must be an object, got ${show(x)}.`);
  if (!isExerciseKind(x.kind)) {
    fail(`${where}: unknown exercise ${show(x.kind)}; use one of ${EXERCISE_KINDS.join(', ')}.`);
  }
  const label = `${where} (${x.kind})`;
  // 500 is the largest repetition count the therapy_session CRF accepts; a prescription of 0 asks for nothing.
  if (!isInt(x.repetitions) || x.repetitions < 1 || x.repetitions > 500) {
    fail(`${label}: repetitions must be a whole number from 1 to 500, got ${show(x.repetitions)}.`);
  }
  if (x.holdSeconds !== undefined && (!isInt(x.holdSeconds) || x.holdSeconds < 0 || x.holdSeconds > 60)) {
    fail(`${label}: holdSeconds must be a whole number from 0 to 60, got ${show(x.holdSeconds)}.`);
  }
  if (x.supervisedOnly !== undefined && typeof x.supervisedOnly !== 'boolean') {
    fail(`${label}: supervisedOnly must be true or false, got ${show(x.supervisedOnly)}.`);
  }
  validateFrequency(x.frequency, label);
}

function validateSplint(s: unknown, where: string): number {
  if (!isRecord(s)) fail(`${where} must be an object, got ${show(s)}.`);
  if (!isNonEmptyString(s.type)) fail(`${where}: type must be a non-empty name, got ${show(s.type)}.`);
  if (!isFiniteNumber(s.wristAngleDeg) || s.wristAngleDeg < -90 || s.wristAngleDeg > 90) {
    fail(`${where}: wristAngleDeg must be from -90 (flexion) to 90 (extension), got ${show(s.wristAngleDeg)}.`);
  }
  if (!isFiniteNumber(s.mcpFlexionDeg) || s.mcpFlexionDeg < 0 || s.mcpFlexionDeg > 90) {
    fail(`${where}: mcpFlexionDeg must be from 0 to 90, got ${show(s.mcpFlexionDeg)}.`);
  }
  if (!isFiniteNumber(s.hoursPerDay) || s.hoursPerDay < 0 || s.hoursPerDay > 24) {
    fail(`${where}: hoursPerDay must be from 0 to 24, got ${show(s.hoursPerDay)}.`);
  }
  if (s.type === SPLINT_TYPES_NONE && s.hoursPerDay !== 0) {
    fail(`${where}: no splint ('none') cannot be worn ${s.hoursPerDay} hours a day.`);
  }
  return s.hoursPerDay;
}

function validatePhase(ph: unknown, index: number): Phase {
  if (!isRecord(ph)) fail(`Phase ${index + 1} must be an object, got ${show(ph)}.`);
  if (!isNonEmptyString(ph.key)) fail(`Phase ${index + 1} needs a key, got ${show(ph.key)}.`);
  const name = `Phase "${ph.key}"`;
  if (!isNonEmptyString(ph.label)) fail(`${name} needs a label.`);
  if (!isInt(ph.fromDay) || ph.fromDay < 0 || ph.fromDay > MAX_POST_OP_DAY) {
    fail(`${name}: fromDay must be a whole post-op day from 0 to ${MAX_POST_OP_DAY}, got ${show(ph.fromDay)}.`);
  }
  if (ph.toDay !== null) {
    if (!isInt(ph.toDay) || ph.toDay > MAX_POST_OP_DAY) {
      fail(`${name}: toDay must be a whole post-op day up to ${MAX_POST_OP_DAY} or null (open-ended), got ${show(ph.toDay)}.`);
    }
    if (ph.toDay < ph.fromDay) fail(`${name} ends on day ${ph.toDay}, before it starts on day ${ph.fromDay}.`);
  }
  let hours = validateSplint(ph.splint, `${name}: splint`);
  if (ph.exerciseSplint !== undefined) hours += validateSplint(ph.exerciseSplint, `${name}: exercise splint`);
  if (hours > 24) fail(`${name}: the splint and the exercise splint together are worn ${hours} hours a day, more than 24.`);
  if (!Array.isArray(ph.exercises)) fail(`${name}: exercises must be a list, got ${show(ph.exercises)}.`);
  const seen = new Set<string>();
  ph.exercises.forEach((x, i) => {
    validatePrescription(x, `${name}, exercise ${i + 1}`);
    const kind = (x as Prescription).kind;
    // One prescription per exercise kind, so that a logged exercise maps to exactly one prescription.
    if (seen.has(kind)) fail(`${name} prescribes ${kind} twice; give it once.`);
    seen.add(kind);
  });
  return ph as unknown as Phase;
}

function phaseIndexAt(phases: readonly Phase[], day: number): number {
  return phases.findIndex((ph) => day >= ph.fromDay && (ph.toDay === null || day <= ph.toDay));
}

// Why a rule could not change the phases as they stand, or null if it can.
function ruleProblem(phases: readonly Phase[], rule: ProgressionRule): string | null {
  if ('extendPhase' in rule.effect) {
    const target = phases.find((ph) => ph.key === (rule.effect as { extendPhase: string }).extendPhase);
    if (!target) return `phase "${rule.effect.extendPhase}" is not in the programme`;
    if (target.toDay === null) return `phase "${target.key}" is open-ended, so it cannot be extended`;
    // Extending a phase that ended before the decision day would rewrite days already past.
    if (target.toDay < rule.atDay) {
      return `phase "${target.key}" ends on day ${target.toDay}, before the rule is decided on day ${rule.atDay}`;
    }
    return null;
  }
  const key = rule.effect.skipToPhase;
  const targetIndex = phases.findIndex((ph) => ph.key === key);
  if (targetIndex < 0) return `phase "${key}" is not in the programme`;
  const current = phaseIndexAt(phases, rule.atDay);
  if (current < 0) return `no phase is in force on day ${rule.atDay}`;
  if (targetIndex <= current) {
    return `phase "${key}" does not come after phase "${phases[current].key}", which is in force on day ${rule.atDay}`;
  }
  return null;
}

function validateRule(r: unknown, index: number, phases: readonly Phase[], ids: Set<string>): void {
  if (!isRecord(r)) fail(`Progression rule ${index + 1} must be an object, got ${show(r)}.`);
  if (!isNonEmptyString(r.id)) fail(`Progression rule ${index + 1} needs an id.`);
  const name = `Progression rule "${r.id}"`;
  if (ids.has(r.id)) fail(`${name} is given twice; rule ids must be unique.`);
  ids.add(r.id);
  if (!isInt(r.atDay) || r.atDay < 0 || r.atDay > MAX_POST_OP_DAY) {
    fail(`${name}: atDay must be a whole post-op day from 0 to ${MAX_POST_OP_DAY}, got ${show(r.atDay)}.`);
  }
  const c = r.condition;
  if (!isRecord(c) || c.measure !== 'tendon_glide' || (c.is !== 'poor' && c.is !== 'good')) {
    fail(`${name}: condition must be { measure: 'tendon_glide', is: 'poor' | 'good' }, got ${show(c)}.`);
  }
  const e = r.effect;
  if (!isRecord(e) || ('extendPhase' in e) === ('skipToPhase' in e)) {
    fail(`${name}: effect must be either { extendPhase, byDays } or { skipToPhase }, got ${show(e)}.`);
  }
  if ('extendPhase' in e) {
    if (!isNonEmptyString(e.extendPhase)) fail(`${name}: extendPhase must name a phase, got ${show(e.extendPhase)}.`);
    if (!isInt(e.byDays) || e.byDays < 1 || e.byDays > 182) {
      fail(`${name}: byDays must be a whole number of days from 1 to 182, got ${show(e.byDays)}.`);
    }
  } else if (!isNonEmptyString(e.skipToPhase)) {
    fail(`${name}: skipToPhase must name a phase, got ${show(e.skipToPhase)}.`);
  }
  if (!isNonEmptyString(r.note)) fail(`${name} needs a note saying what it does.`);
  const problem = ruleProblem(phases, r as unknown as ProgressionRule);
  if (problem) fail(`${name} cannot take effect: ${problem}.`);
}

/** Checks a programme (contiguous, ordered phases from day 0 or 1; sensible numbers; rules that can take effect) and returns it typed; throws InvalidInputError naming the phase or rule. */
export function validateProgramme(p: unknown): Programme {
  if (!isRecord(p)) fail(`A programme must be an object, got ${show(p)}.`);
  if (!isNonEmptyString(p.key)) fail(`A programme needs a key, got ${show(p.key)}.`);
  const name = `Programme "${p.key}"`;
  if (!isNonEmptyString(p.label)) fail(`${name} needs a label.`);
  if (typeof p.description !== 'string') fail(`${name}: description must be text.`);
  if (p.arm !== undefined && !isNonEmptyString(p.arm)) fail(`${name}: arm must be a non-empty code when given, got ${show(p.arm)}.`);
  if (!Array.isArray(p.phases) || p.phases.length === 0) fail(`${name} needs at least one phase.`);
  const phases = p.phases.map((ph, i) => validatePhase(ph, i));
  const keys = new Set<string>();
  // Order first, so a list in the wrong order is reported as such rather than as a gap or overlap.
  phases.forEach((ph, i) => {
    const prev = phases[i - 1];
    if (prev && ph.fromDay < prev.fromDay) {
      fail(`Phase "${ph.key}" (${phaseDays(ph)}) starts before phase "${prev.key}" (${phaseDays(prev)}); list phases in day order.`);
    }
  });
  phases.forEach((ph, i) => {
    if (keys.has(ph.key)) fail(`Phase "${ph.key}" is given twice; phase keys must be unique.`);
    keys.add(ph.key);
    if (i === 0) {
      if (ph.fromDay !== 0 && ph.fromDay !== 1) {
        fail(`Phase "${ph.key}" is the first phase and must start on day 0 or day 1, not day ${ph.fromDay}.`);
      }
      return;
    }
    const prev = phases[i - 1];
    if (prev.toDay === null) {
      fail(`Phase "${prev.key}" is open-ended but is followed by phase "${ph.key}"; only the last phase may be open-ended.`);
    }
    if (ph.fromDay <= prev.toDay) {
      fail(`Phase "${ph.key}" (${phaseDays(ph)}) overlaps phase "${prev.key}" (${phaseDays(prev)}).`);
    }
    if (ph.fromDay > prev.toDay + 1) {
      const gap = ph.fromDay - 1 === prev.toDay + 1 ? `day ${prev.toDay + 1} is` : `days ${prev.toDay + 1}–${ph.fromDay - 1} are`;
      fail(`Phase "${ph.key}" starts on day ${ph.fromDay} but phase "${prev.key}" ends on day ${prev.toDay}: ${gap} in no phase.`);
    }
  });
  if (!Array.isArray(p.progression)) fail(`${name}: progression must be a list (empty when there are no rules).`);
  const ids = new Set<string>();
  p.progression.forEach((r, i) => validateRule(r, i, phases, ids));
  return p as unknown as Programme;
}

function validateFindings(findings: unknown): ProgressionFinding[] {
  if (!Array.isArray(findings)) fail(`Findings must be a list, got ${show(findings)}.`);
  const byDay = new Map<number, string>();
  findings.forEach((f, i) => {
    const name = `Finding ${i + 1}`;
    if (!isRecord(f) || f.measure !== 'tendon_glide') {
      fail(`${name} must be a tendon glide finding { measure: 'tendon_glide', value, atDay }, got ${show(f)}.`);
    }
    if (f.value !== 'poor' && f.value !== 'good') fail(`${name}: tendon glide must be 'poor' or 'good', got ${show(f.value)}.`);
    const day = checkPostOpDay(f.atDay, `${name}: atDay`);
    const earlier = byDay.get(day);
    if (earlier !== undefined && earlier !== f.value) {
      fail(`${name}: tendon glide is recorded as both ${earlier} and ${f.value} on day ${day}; keep one.`);
    }
    byDay.set(day, f.value);
  });
  return findings as ProgressionFinding[];
}

// The finding nearest the rule's day within the window; on a tie the earlier one, which was known first.
function decidingFinding(findings: readonly ProgressionFinding[], rule: ProgressionRule, windowDays: number): ProgressionFinding | null {
  let best: ProgressionFinding | null = null;
  for (const f of findings) {
    if (f.measure !== rule.condition.measure) continue;
    const distance = Math.abs(f.atDay - rule.atDay);
    if (distance > windowDays) continue;
    const bestDistance = best ? Math.abs(best.atDay - rule.atDay) : Infinity;
    if (distance < bestDistance || (distance === bestDistance && best !== null && f.atDay < best.atDay)) best = f;
  }
  return best;
}

function shiftPhase(ph: Phase, by: number): Phase {
  return { ...ph, fromDay: ph.fromDay + by, toDay: ph.toDay === null ? null : ph.toDay + by };
}

function applyEffect(phases: readonly Phase[], rule: ProgressionRule): Phase[] {
  const effect = rule.effect;
  if ('extendPhase' in effect) {
    const at = phases.findIndex((ph) => ph.key === effect.extendPhase);
    // The extended phase ends later and every later phase moves back by the same number of days.
    return phases.map((ph, i) =>
      i < at ? ph : i === at ? { ...ph, toDay: (ph.toDay as number) + effect.byDays } : shiftPhase(ph, effect.byDays),
    );
  }
  const current = phaseIndexAt(phases, rule.atDay);
  const target = phases.findIndex((ph) => ph.key === effect.skipToPhase);
  // The phase in force ends on the decision day, the phases in between are dropped, and the target
  // phase starts the next day keeping its length; later phases move forward with it.
  const by = rule.atDay + 1 - phases[target].fromDay;
  return [
    ...phases.slice(0, current),
    { ...phases[current], toDay: rule.atDay },
    ...phases.slice(target).map((ph) => shiftPhase(ph, by)),
  ];
}

/**
 * Applies the progression rules decided by the findings and returns a new programme with shifted
 * phase boundaries. A rule is decided by the finding of its measure nearest its day (within
 * findingWindowDays either side, default 3); it takes effect when that finding matches its condition.
 * Decided rules are removed from the result's progression; undecided rules stay, except those an
 * applied rule has made impossible (for example a rule extending a phase that was skipped).
 * Rules are applied in day order; rule days stay absolute post-op days.
 */
export function applyProgression(
  p: Programme,
  findings: ProgressionFinding[],
  options: ApplyProgressionOptions = {},
): Programme {
  const programme = validateProgramme(p);
  const list = validateFindings(findings);
  const windowDays = options.findingWindowDays ?? DEFAULT_FINDING_WINDOW_DAYS;
  if (!isInt(windowDays) || windowDays < 0 || windowDays > 28) {
    fail(`findingWindowDays must be a whole number of days from 0 to 28, got ${show(windowDays)}.`);
  }
  let phases: Phase[] = programme.phases.map((ph) => ({ ...ph }));
  const undecided = new Set<ProgressionRule>();
  const ordered = programme.progression
    .map((rule, index) => ({ rule, index }))
    .sort((a, b) => a.rule.atDay - b.rule.atDay || a.index - b.index);
  for (const { rule } of ordered) {
    const finding = decidingFinding(list, rule, windowDays);
    if (!finding) {
      undecided.add(rule);
      continue;
    }
    if (finding.value !== rule.condition.is) continue;
    // An earlier rule may have moved or dropped this rule's phase; then it has nothing left to change.
    if (ruleProblem(phases, rule) !== null) continue;
    phases = applyEffect(phases, rule);
  }
  const progression = programme.progression.filter((r) => undecided.has(r) && ruleProblem(phases, r) === null);
  return validateProgramme({ ...programme, phases, progression });
}

/** The phase in force on a post-op day, or null when the day lies outside every phase. */
export function phaseAt(p: Programme, postOpDay: number): Phase | null {
  const programme = validateProgramme(p);
  const day = checkPostOpDay(postOpDay, 'postOpDay');
  const i = phaseIndexAt(programme.phases, day);
  return i < 0 ? null : programme.phases[i];
}

function sessionsOf(f: Frequency): number {
  if ('sessionsPerDay' in f) return f.sessionsPerDay;
  return Math.floor((f.wakingHours ?? DEFAULT_WAKING_HOURS) / f.everyHours);
}

/**
 * Exercise sessions a day asked for by a phase's prescriptions. "Every N hours" gives
 * floor(wakingHours / N) sessions (waking hours default 16). With several frequencies the phase asks
 * for the largest of them: exercises are done together in one session, so a session four-hourly and
 * one hourly make 16 sessions a day, not 20. A phase without exercises asks for 0.
 */
export function sessionsPrescribedPerDay(prescriptions: Prescription[]): number {
  if (!Array.isArray(prescriptions)) fail(`Prescriptions must be a list, got ${show(prescriptions)}.`);
  prescriptions.forEach((x, i) => validatePrescription(x, `Exercise ${i + 1}`));
  return prescriptions.reduce((max, x) => Math.max(max, sessionsOf(x.frequency)), 0);
}

function validateSessions(sessions: unknown): SessionLog[] {
  if (!Array.isArray(sessions)) fail(`Session logs must be a list, got ${show(sessions)}.`);
  sessions.forEach((s, i) => validateSession(s, `Session ${i + 1}`));
  return sessions as SessionLog[];
}

function validateSession(s: unknown, name: string): SessionLog {
  if (!isRecord(s)) fail(`${name} must be an object, got ${show(s)}.`);
  checkPostOpDay(s.postOpDay, `${name}: postOpDay`);
  const where = `${name} (day ${s.postOpDay})`;
  if (!Array.isArray(s.exercises)) fail(`${where}: exercises must be a list, got ${show(s.exercises)}.`);
  s.exercises.forEach((x, i) => {
    if (!isRecord(x) || !isExerciseKind(x.kind)) {
      fail(`${where}, exercise ${i + 1}: unknown exercise ${show(isRecord(x) ? x.kind : x)}; use one of ${EXERCISE_KINDS.join(', ')}.`);
    }
    if (!isInt(x.repetitions) || x.repetitions < 0 || x.repetitions > 500) {
      fail(`${where}, exercise ${i + 1} (${x.kind}): repetitions must be a whole number from 0 to 500, got ${show(x.repetitions)}.`);
    }
  });
  if (s.supervised !== undefined && typeof s.supervised !== 'boolean') {
    fail(`${where}: supervised must be true or false, got ${show(s.supervised)}.`);
  }
  return s as unknown as SessionLog;
}

// A log counts as a session when at least one exercise was done (repetitions above 0).
function isExerciseSession(s: SessionLog): boolean {
  return s.exercises.some((x) => x.repetitions > 0);
}

/** Post-op week of a day: 0 for the day of repair, ceil(day / 7) after it (days 1–7 = week 1). */
export function postOpWeek(postOpDay: number): number {
  const day = checkPostOpDay(postOpDay, 'postOpDay');
  return Math.ceil(day / 7);
}

function percentOf(logged: number, prescribed: number): number | null {
  return prescribed === 0 ? null : (logged / prescribed) * 100;
}

/**
 * Session adherence over post-op days fromDay–toDay (inclusive), per post-op week and in total.
 * Each day prescribes the sessions of the phase in force (0 outside every phase). A day's logged
 * sessions count up to that day's prescribed number, so extra sessions on one day neither lift the
 * day above 100 % nor make up for a missed day; sessions on a day outside every phase count 0.
 * A log counts as a session when it records at least one exercise with repetitions above 0.
 * Percentages are unrounded and null when nothing was prescribed. Apply progression findings first
 * (applyProgression) so the phases are the ones the participant actually followed.
 */
export function adherence(programme: Programme, sessions: SessionLog[], fromDay: number, toDay: number): AdherenceReport {
  const p = validateProgramme(programme);
  const logs = validateSessions(sessions);
  const from = checkPostOpDay(fromDay, 'fromDay');
  const to = checkPostOpDay(toDay, 'toDay');
  if (to < from) fail(`toDay (${to}) is before fromDay (${from}).`);

  const loggedByDay = new Map<number, number>();
  for (const s of logs) {
    if (s.postOpDay < from || s.postOpDay > to || !isExerciseSession(s)) continue;
    loggedByDay.set(s.postOpDay, (loggedByDay.get(s.postOpDay) ?? 0) + 1);
  }
  const perPhase = p.phases.map((ph) => phaseSessions(ph.exercises));

  const weeks: AdherenceWeek[] = [];
  for (let day = from; day <= to; day++) {
    const week = Math.ceil(day / 7);
    let current = weeks[weeks.length - 1];
    if (!current || current.week !== week) {
      current = { week, fromDay: day, toDay: day, prescribed: 0, logged: 0, percent: null };
      weeks.push(current);
    }
    current.toDay = day;
    const i = phaseIndexAt(p.phases, day);
    const prescribed = i < 0 ? 0 : perPhase[i];
    current.prescribed += prescribed;
    current.logged += Math.min(loggedByDay.get(day) ?? 0, prescribed);
  }
  let prescribed = 0;
  let logged = 0;
  for (const w of weeks) {
    w.percent = percentOf(w.logged, w.prescribed);
    prescribed += w.prescribed;
    logged += w.logged;
  }
  return { weeks, total: { prescribed, logged, percent: percentOf(logged, prescribed) } };
}

// Sessions a day for prescriptions already validated as part of a programme.
function phaseSessions(prescriptions: readonly Prescription[]): number {
  return prescriptions.reduce((max, x) => Math.max(max, sessionsOf(x.frequency)), 0);
}

function lower(kind: ExerciseKind): string {
  const label = EXERCISE_LABELS[kind];
  return label.charAt(0).toLowerCase() + label.slice(1);
}

function allowedText(ph: Phase): string {
  return ph.exercises.length === 0
    ? 'prescribes no exercises'
    : `allows ${ph.exercises.map((x) => lower(x.kind)).join(', ')}`;
}

function notAllowedReason(phases: readonly Phase[], at: number, kind: ExerciseKind, day: number): string {
  const ph = phases[at];
  const here = `phase "${ph.label}" (${phaseDays(ph)}) ${allowedText(ph)}`;
  const label = EXERCISE_LABELS[kind];
  const later = phases.slice(at + 1).find((q) => q.exercises.some((x) => x.kind === kind));
  if (later) {
    return `${label} is not yet part of the programme on day ${day}: ${here}. It starts on day ${later.fromDay} (phase "${later.label}").`;
  }
  const earlier = phases
    .slice(0, at)
    .filter((q) => q.exercises.some((x) => x.kind === kind))
    .pop();
  if (earlier) {
    return `${label} is no longer part of the programme on day ${day}: it stopped after day ${earlier.toDay} (phase "${earlier.label}"); ${here}.`;
  }
  return `${label} is not part of this programme at any stage: ${here}.`;
}

/**
 * Checks one logged session against the phase in force on its day and returns one entry per exercise
 * kind that needs a therapist's attention: an exercise the phase does not allow (or any exercise on a
 * day outside every phase), or an exercise the phase allows only with the therapist logged in a
 * session not recorded as supervised. Exercises logged with 0 repetitions were not done and are not
 * checked. An empty list means the session fits the programme. Apply progression findings first.
 */
export function checkSession(programme: Programme, session: SessionLog): SessionFlag[] {
  const p = validateProgramme(programme);
  const s = validateSession(session, 'Session');
  const day = s.postOpDay;
  const at = phaseIndexAt(p.phases, day);
  const flags: SessionFlag[] = [];
  const seen = new Set<ExerciseKind>();
  for (const x of s.exercises) {
    if (x.repetitions === 0 || seen.has(x.kind)) continue;
    seen.add(x.kind);
    if (at < 0) {
      const first = p.phases[0];
      const last = p.phases[p.phases.length - 1];
      const span = last.toDay === null ? `from day ${first.fromDay}` : `days ${first.fromDay}–${last.toDay}`;
      flags.push({
        kind: x.kind,
        reason: `${EXERCISE_LABELS[x.kind]} was logged on day ${day}, outside the programme (it runs ${span}), so no exercise is prescribed that day.`,
      });
      continue;
    }
    const ph = p.phases[at];
    const rx = ph.exercises.find((e) => e.kind === x.kind);
    if (!rx) {
      flags.push({ kind: x.kind, reason: notAllowedReason(p.phases, at, x.kind, day) });
    } else if (rx.supervisedOnly && s.supervised !== true) {
      flags.push({
        kind: x.kind,
        reason: `${EXERCISE_LABELS[x.kind]} is to be done only with the therapist in phase "${ph.label}" (${phaseDays(ph)}); this session on day ${day} is not recorded as supervised.`,
      });
    }
  }
  return flags;
}
