// Visit scheduling cores: date-only arithmetic on 'YYYY-MM-DD' strings, visit windows and visit status.
//
// Dates are calendar dates without a time of day. Every calculation turns them into UTC day numbers
// (days since 1970-01-01, the same numbers as Date.UTC(y, m - 1, d) / 86400000) with integer
// arithmetic, so neither the server's time zone nor a daylight-saving change can shift a result.
//
// Two day-numbering conventions are in use and are kept apart on purpose:
// - post-operative day (postOpDay): the date of repair is day 0, the next day is day 1. The study
//   schedule of assessments is written this way ("week 2 = day 14 ± 3").
// - study day (studyDay): the reference date is day 1, the day before it is −1; there is no day 0
//   (the CDISC --DY convention used in analysis datasets).

/** Raised for arguments a person has to correct; the API layer turns it into HTTP 400. */
export class InvalidInputError extends Error {
  code = 'invalid_input' as const;
  constructor(message: string) {
    super(message);
    this.name = 'InvalidInputError';
  }
}

/** A visit window as calendar dates; earliest and latest are both inside the window. */
export interface VisitWindow {
  target: string;
  earliest: string;
  latest: string;
}

/** Status of a planned visit on a given day. */
export type VisitStatus = 'upcoming' | 'open' | 'overdue' | 'done' | 'done-out-of-window' | 'missed';

/** Days past the latest day of a window after which an uncompleted visit counts as missed (common practice, no source). */
export const DEFAULT_MISSED_AFTER_DAYS = 28;

const DATE_PATTERN = /^(\d{4})-(\d{2})-(\d{2})$/;
// Four-digit years only; year 0000 is left out so every accepted date is an ordinary AD year.
const MIN_DAY = daysFromCivil(1, 1, 1);
const MAX_DAY = daysFromCivil(9999, 12, 31);

function show(value: unknown): string {
  return typeof value === 'string' ? JSON.stringify(value) : String(value);
}

function isLeapYear(y: number): boolean {
  return (y % 4 === 0 && y % 100 !== 0) || y % 400 === 0;
}

function daysInMonth(y: number, m: number): number {
  if (m === 2) return isLeapYear(y) ? 29 : 28;
  return m === 4 || m === 6 || m === 9 || m === 11 ? 30 : 31;
}

// Day number of a proleptic Gregorian date, counted in 400-year eras of 146097 days with March as
// the first month so the leap day falls at the end of the counted year. Pure integers: no Date
// object, so no local time and no two-digit-year reinterpretation (Date.UTC maps year 24 to 1924).
function daysFromCivil(year: number, month: number, day: number): number {
  const y = month <= 2 ? year - 1 : year;
  const era = Math.floor(y / 400);
  const yoe = y - era * 400;
  const mp = (month + 9) % 12;
  const doy = Math.floor((153 * mp + 2) / 5) + day - 1;
  const doe = yoe * 365 + Math.floor(yoe / 4) - Math.floor(yoe / 100) + doy;
  return era * 146097 + doe - 719468;
}

function civilFromDays(dayNumber: number): [number, number, number] {
  const z = dayNumber + 719468;
  const era = Math.floor(z / 146097);
  const doe = z - era * 146097;
  const yoe = Math.floor((doe - Math.floor(doe / 1460) + Math.floor(doe / 36524) - Math.floor(doe / 146096)) / 365);
  const doy = doe - (365 * yoe + Math.floor(yoe / 4) - Math.floor(yoe / 100));
  const mp = Math.floor((5 * doy + 2) / 153);
  const d = doy - Math.floor((153 * mp + 2) / 5) + 1;
  const m = mp < 10 ? mp + 3 : mp - 9;
  const y = yoe + era * 400 + (m <= 2 ? 1 : 0);
  return [y, m, d];
}

function pad(n: number, width: number): string {
  return String(n).padStart(width, '0');
}

function formatDay(dayNumber: number): string {
  const [y, m, d] = civilFromDays(dayNumber);
  return `${pad(y, 4)}-${pad(m, 2)}-${pad(d, 2)}`;
}

function parseParts(s: unknown): [number, number, number] | null {
  if (typeof s !== 'string') return null;
  const match = DATE_PATTERN.exec(s);
  if (!match) return null;
  const [y, m, d] = [Number(match[1]), Number(match[2]), Number(match[3])];
  if (y < 1 || m < 1 || m > 12 || d < 1 || d > daysInMonth(y, m)) return null;
  return [y, m, d];
}

function toDay(s: unknown, what: string): number {
  const parts = parseParts(s);
  if (!parts) {
    throw new InvalidInputError(`${what} must be a real calendar date written YYYY-MM-DD (got ${show(s)}).`);
  }
  return daysFromCivil(parts[0], parts[1], parts[2]);
}

function requireWholeDays(n: unknown, what: string, minimum?: number): number {
  if (typeof n !== 'number' || !Number.isSafeInteger(n) || (minimum !== undefined && n < minimum)) {
    const range = minimum === undefined ? 'a whole number of days' : `a whole number of days, at least ${minimum}`;
    throw new InvalidInputError(`${what} must be ${range} (got ${show(n)}).`);
  }
  return n;
}

function fromDay(dayNumber: number, what: string): string {
  if (dayNumber < MIN_DAY || dayNumber > MAX_DAY) {
    throw new InvalidInputError(`${what} falls outside the years 0001 to 9999.`);
  }
  return formatDay(dayNumber);
}

function toWindowDays(window: unknown, what: string): { target: number; earliest: number; latest: number } {
  if (typeof window !== 'object' || window === null) throw new InvalidInputError(`${what} must have target, earliest and latest dates.`);
  const w = window as Partial<VisitWindow>;
  const target = toDay(w.target, `The target date of ${what}`);
  const earliest = toDay(w.earliest, `The earliest date of ${what}`);
  const latest = toDay(w.latest, `The latest date of ${what}`);
  if (!(earliest <= target && target <= latest)) {
    throw new InvalidInputError(
      `In ${what} the dates must be in order earliest ≤ target ≤ latest (got ${w.earliest}, ${w.target}, ${w.latest}).`,
    );
  }
  return { target, earliest, latest };
}

/** True when s is a real calendar date written exactly YYYY-MM-DD (years 0001–9999). */
export function isValidDate(s: string): boolean {
  return parseParts(s) !== null;
}

/** The date `days` calendar days after `date` (negative days go back). */
export function addDays(date: string, days: number): string {
  const start = toDay(date, 'The date');
  return fromDay(start + requireWholeDays(days, 'The number of days to add'), `${date} plus ${days} days`);
}

/** Signed number of calendar days from a to b (positive when b is later). */
export function daysBetween(a: string, b: string): number {
  return toDay(b, 'The second date') - toDay(a, 'The first date');
}

/** Post-operative day of `date`: the repair date day0 is day 0, the next day 1, the day before −1. */
export function postOpDay(day0: string, date: string): number {
  return toDay(date, 'The date') - toDay(day0, 'The date of repair');
}

/** Study day of `date` in the CDISC --DY convention: the reference date is day 1, the day before −1, no day 0. */
export function studyDay(reference: string, date: string): number {
  const diff = toDay(date, 'The date') - toDay(reference, 'The reference date');
  // Dates on or after the reference count from 1; dates before it count back from −1.
  return diff >= 0 ? diff + 1 : diff;
}

/** The calendar date of a study day (reference = day 1, no day 0); the inverse of studyDay. */
export function studyDayDate(reference: string, day: number): string {
  const ref = toDay(reference, 'The reference date');
  requireWholeDays(day, 'The study day');
  if (day === 0) throw new InvalidInputError('There is no study day 0: the reference date is day 1 and the day before it is day −1.');
  return fromDay(ref + (day > 0 ? day - 1 : day), `Study day ${day}`);
}

/** Visit window dates for a visit `offsetDays` after day0 (the repair date), open `before` days early and `after` days late. */
export function visitWindow(
  day0: string,
  def: { offsetDays: number; before: number; after: number },
): { target: string; earliest: string; latest: string } {
  const start = toDay(day0, 'The date of repair');
  if (typeof def !== 'object' || def === null) throw new InvalidInputError('The visit definition must have offsetDays, before and after.');
  const offset = requireWholeDays(def.offsetDays, 'The visit offset');
  const before = requireWholeDays(def.before, 'The days allowed before the target', 0);
  const after = requireWholeDays(def.after, 'The days allowed after the target', 0);
  const target = start + offset;
  return {
    target: fromDay(target, 'The target date'),
    earliest: fromDay(target - before, 'The earliest date'),
    latest: fromDay(target + after, 'The latest date'),
  };
}

/**
 * Status of a visit with the given window on `today`, with every boundary day inclusive.
 *
 * Completed (completedOn given): 'done' when earliest ≤ completedOn ≤ latest, otherwise
 * 'done-out-of-window'; today plays no part. Not completed: 'upcoming' when today < earliest;
 * 'open' when earliest ≤ today ≤ latest; 'overdue' from latest + 1 up to and including
 * latest + missedAfterDays; 'missed' from latest + missedAfterDays + 1 on. missedAfterDays defaults
 * to 28 (common practice, no source); 0 makes the visit missed the day after the window closes.
 */
export function visitStatus(
  window: { target: string; earliest: string; latest: string },
  today: string,
  completedOn?: string,
  opts?: { missedAfterDays?: number },
): 'upcoming' | 'open' | 'overdue' | 'done' | 'done-out-of-window' | 'missed' {
  const w = toWindowDays(window, 'the visit window');
  const now = toDay(today, "Today's date");
  const grace = requireWholeDays(opts?.missedAfterDays ?? DEFAULT_MISSED_AFTER_DAYS, 'missedAfterDays', 0);
  if (completedOn !== undefined) {
    const done = toDay(completedOn, 'The completion date');
    return done >= w.earliest && done <= w.latest ? 'done' : 'done-out-of-window';
  }
  if (now < w.earliest) return 'upcoming';
  if (now <= w.latest) return 'open';
  return now - w.latest <= grace ? 'overdue' : 'missed';
}

/** True when two windows share at least one day (a window ending on the day another starts overlaps it). */
export function windowsOverlap(
  a: { target: string; earliest: string; latest: string },
  b: { target: string; earliest: string; latest: string },
): boolean {
  const x = toWindowDays(a, 'the first window');
  const y = toWindowDays(b, 'the second window');
  return x.earliest <= y.latest && y.earliest <= x.latest;
}

/**
 * The id of the window that contains `date` (edges inclusive), or null when no window does or the date is missing.
 * The windows must not overlap, so a date can never belong to two of them.
 */
export function assignToWindow(
  date: string | null | undefined,
  windows: { id: string; target: string; earliest: string; latest: string }[],
): string | null {
  if (!Array.isArray(windows)) throw new InvalidInputError('The windows must be given as a list.');
  const days = windows.map((w, i) => {
    if (typeof w?.id !== 'string' || w.id.length === 0) throw new InvalidInputError(`Window ${i + 1} has no id.`);
    return { id: w.id, ...toWindowDays(w, `window ${show(w.id)}`) };
  });
  for (let i = 0; i < days.length; i += 1) {
    for (let j = i + 1; j < days.length; j += 1) {
      if (days[i].earliest <= days[j].latest && days[j].earliest <= days[i].latest) {
        throw new InvalidInputError(`Windows ${show(days[i].id)} and ${show(days[j].id)} overlap; windows must not share a day.`);
      }
    }
  }
  if (date === null || date === undefined) return null;
  const d = toDay(date, 'The visit date');
  return days.find((w) => w.earliest <= d && d <= w.latest)?.id ?? null;
}
