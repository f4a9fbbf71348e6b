/**
 * Recruitment monitoring: when will the study reach its target, and how does recruitment compare with
 * the plan month by month.
 *
 * The projection treats recent randomisations as a Poisson process: the rate is the count k in the
 * last `windowDays` days divided by the window, with the exact (Garwood) 95 % interval for a Poisson
 * count. The projected date is the day the remaining participants would be reached at that rate; its
 * interval comes from the interval of the rate (a faster rate gives the earlier date). This is an
 * orientation for the study team, not a forecast with guarantees: it assumes the recent rate holds.
 *
 * All dates are calendar dates written YYYY-MM-DD; months are written YYYY-MM.
 */
import { jStat } from 'jstat';
import { addDays, daysBetween, isValidDate } from '@/lib/schedule';
import { InvalidInputError } from './errors';

/** Result of {@link projectTargetDate}. Rates are participants per day. */
export interface TargetProjection {
  /** Point estimate of the recent randomisation rate, k / windowDays. */
  rate: number;
  /** Exact 95 % interval of the rate (Garwood), [lower, upper]. */
  rateCI: [number, number];
  /** Participants still to randomise (never below 0). */
  remaining: number;
  /** Date the target is reached at the point rate; null when nobody was randomised in the window. */
  projected: string | null;
  /** [earliest, latest] projected date, from the upper and the lower rate limit; latest is null when k = 0. */
  projectedCI: [string | null, string | null];
}

/** Input of {@link projectTargetDate}. */
export interface ProjectionInput {
  /** Randomisation date of every participant randomised so far (YYYY-MM-DD), in any order. */
  randomisedDates: string[];
  /** Number of participants the study plans to randomise. */
  target: number;
  /** The day the projection is made (YYYY-MM-DD); no randomisation date may be later. */
  today: string;
  /** Length of the recent period the rate is estimated from, in days (default 90). */
  windowDays?: number;
}

/** One month of the recruitment chart. */
export interface MonthCount {
  month: string;
  count: number;
  cumulative: number;
}

/** One month of the planned recruitment line: planned cumulative total at the end of the month. */
export interface PlannedMonth {
  month: string;
  planned: number;
}

const DEFAULT_WINDOW_DAYS = 90;
const LAST_DATE = '9999-12-31';
const MONTH_PATTERN = /^(\d{4})-(0[1-9]|1[0-2])$/;

function shown(value: unknown): string {
  if (typeof value === 'string') return `"${value}"`;
  if (value === undefined) return 'nothing';
  if (Array.isArray(value)) return 'a list';
  return String(value);
}

function requireDate(value: unknown, what: string): string {
  if (typeof value !== 'string' || !isValidDate(value)) {
    throw new InvalidInputError(`${what} must be a real calendar date written YYYY-MM-DD (got ${shown(value)}).`);
  }
  return value;
}

function requireWhole(value: unknown, what: string, minimum: number): number {
  if (typeof value !== 'number' || !Number.isSafeInteger(value) || value < minimum) {
    throw new InvalidInputError(`${what} must be a whole number of at least ${minimum} (got ${shown(value)}).`);
  }
  return value;
}

function requireDateList(value: unknown, what: string): string[] {
  if (!Array.isArray(value)) throw new InvalidInputError(`${what} must be a list of dates (got ${shown(value)}).`);
  value.forEach((d, i) => requireDate(d, `Item ${i + 1} of ${what}`));
  return value as string[];
}

function requireMonth(value: unknown, what: string): { year: number; month: number } {
  const m = typeof value === 'string' ? MONTH_PATTERN.exec(value) : null;
  if (!m || m[1] === '0000') {
    throw new InvalidInputError(`${what} must be a month written YYYY-MM (got ${shown(value)}).`);
  }
  return { year: Number(m[1]), month: Number(m[2]) };
}

function monthKey(year: number, month: number): string {
  return `${String(year).padStart(4, '0')}-${String(month).padStart(2, '0')}`;
}

/** The `count` consecutive months starting with (year, month). */
function monthsFrom(year: number, month: number, count: number): string[] {
  const out: string[] = [];
  for (let i = 0; i < count; i++) {
    const index = year * 12 + (month - 1) + i;
    out.push(monthKey(Math.floor(index / 12), (index % 12) + 1));
  }
  return out;
}

/** Exact 95 % limits for a Poisson count k (Garwood 1936), as counts, not yet divided by the window. */
export function poissonCountCI(k: number): [number, number] {
  requireWhole(k, 'The count', 0);
  // With k = 0 the lower limit is 0 by definition (a chi-square with 0 degrees of freedom is degenerate).
  const lower = k === 0 ? 0 : jStat.chisquare.inv(0.025, 2 * k) / 2;
  const upper = jStat.chisquare.inv(0.975, 2 * k + 2) / 2;
  return [lower, upper];
}

/** Estimate the recent randomisation rate and the date the study reaches its target. */
export function projectTargetDate(input: ProjectionInput): TargetProjection {
  if (typeof input !== 'object' || input === null) {
    throw new InvalidInputError('The projection needs randomisedDates, target and today.');
  }
  const today = requireDate(input.today, 'Today');
  const dates = requireDateList(input.randomisedDates, 'the randomisation dates');
  const target = requireWhole(input.target, 'The recruitment target', 1);
  const windowDays = requireWhole(input.windowDays ?? DEFAULT_WINDOW_DAYS, 'The estimation window (windowDays)', 1);

  let k = 0;
  dates.forEach((d, i) => {
    const ago = daysBetween(d, today);
    if (ago < 0) {
      throw new InvalidInputError(`Item ${i + 1} of the randomisation dates (${d}) is after today (${today}).`);
    }
    // The window is the windowDays days ending with today: today counts, the day windowDays ago does not.
    if (ago < windowDays) k += 1;
  });

  const [lowerCount, upperCount] = poissonCountCI(k);
  const rate = k / windowDays;
  const rateCI: [number, number] = [lowerCount / windowDays, upperCount / windowDays];
  const remaining = Math.max(0, target - dates.length);

  if (remaining === 0) return { rate, rateCI, remaining, projected: today, projectedCI: [today, today] };

  const horizon = daysBetween(today, LAST_DATE);
  // Days needed = remaining / (count / windowDays), written as a single division so that whole-number
  // cases (60 · 90 / 30 = 180) stay exact and ceil does not add a day for a rounding crumb.
  const dateAt = (count: number): string | null => {
    if (count <= 0) return null;
    const days = Math.ceil((remaining * windowDays) / count);
    // Beyond the last representable calendar date the target is, for any planning purpose, never reached.
    return days > horizon ? null : addDays(today, days);
  };

  return {
    rate,
    rateCI,
    remaining,
    projected: dateAt(k),
    projectedCI: [dateAt(upperCount), dateAt(lowerCount)],
  };
}

/**
 * Randomisations per calendar month from `from` to `to` (YYYY-MM, both included); `cumulative` is the
 * running total at the end of each month and includes participants randomised before `from`.
 */
export function cumulativeByMonth(dates: string[], from: string, to: string): MonthCount[] {
  const list = requireDateList(dates, 'the randomisation dates');
  const start = requireMonth(from, 'The first month (from)');
  const end = requireMonth(to, 'The last month (to)');
  const span = end.year * 12 + end.month - (start.year * 12 + start.month) + 1;
  if (span < 1) throw new InvalidInputError(`The first month (${from}) must not be after the last month (${to}).`);

  const months = monthsFrom(start.year, start.month, span);
  const perMonth = new Map<string, number>(months.map((m) => [m, 0]));
  let before = 0;
  for (const d of list) {
    const key = d.slice(0, 7);
    if (perMonth.has(key)) perMonth.set(key, (perMonth.get(key) ?? 0) + 1);
    // YYYY-MM strings compare in calendar order, so a plain string comparison finds earlier months.
    else if (key < months[0]) before += 1;
  }
  let cumulative = before;
  return months.map((month) => {
    const count = perMonth.get(month) ?? 0;
    cumulative += count;
    return { month, count, cumulative };
  });
}

/**
 * The planned recruitment line: `months` calendar months starting with the month of `start`, with the
 * planned cumulative total at the end of each month rising linearly to `target` (rounded to whole people).
 */
export function plannedLine(input: { start: string; months: number; target: number }): PlannedMonth[] {
  if (typeof input !== 'object' || input === null) {
    throw new InvalidInputError('The planned line needs start, months and target.');
  }
  const start = requireDate(input.start, 'The recruitment start date');
  const months = requireWhole(input.months, 'The planned recruitment period in months', 1);
  const target = requireWhole(input.target, 'The recruitment target', 1);
  if (months > 1200) throw new InvalidInputError(`The planned recruitment period must be at most 1200 months (got ${months}).`);
  const year = Number(start.slice(0, 4));
  const month = Number(start.slice(5, 7));
  if ((year * 12 + month - 1 + months - 1) / 12 >= 10000) {
    throw new InvalidInputError(`A recruitment period of ${months} months from ${start} runs past the year 9999.`);
  }
  return monthsFrom(year, month, months).map((m, i) => ({
    month: m,
    planned: Math.round((target * (i + 1)) / months),
  }));
}
