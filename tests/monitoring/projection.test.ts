import { describe, it, expect } from 'vitest';
import { jStat } from 'jstat';
import { addDays } from '@/lib/schedule';
import {
  InvalidInputError,
  projectTargetDate,
  poissonCountCI,
  cumulativeByMonth,
  plannedLine,
} from '@/lib/monitoring';

// Exact 95 % confidence limits for a Poisson count (Garwood 1936), as printed in the widely reproduced
// tables of exact Poisson limits. These four rows are quoted from memory (no row in the check-value
// file), so they are compared to the 3 decimals such tables print.
const GARWOOD_FROM_MEMORY: { k: number; lower: number; upper: number }[] = [
  { k: 0, lower: 0, upper: 3.689 },
  { k: 1, lower: 0.0253, upper: 5.572 },
  { k: 5, lower: 1.623, upper: 11.668 },
  { k: 10, lower: 4.795, upper: 18.39 },
];

describe('poissonCountCI — exact Garwood limits', () => {
  for (const row of GARWOOD_FROM_MEMORY) {
    it(`k = ${row.k}: ${row.lower} – ${row.upper} (exact Poisson 95 % limits table, Garwood 1936, from memory)`, () => {
      const [lower, upper] = poissonCountCI(row.k);
      expect(lower).toBeCloseTo(row.lower, 3);
      expect(upper).toBeCloseTo(row.upper, 3);
    });
  }

  it('k = 0: the upper limit is −ln(0.025), because a chi-square on 2 df is exponential with mean 2 (derived)', () => {
    const [lower, upper] = poissonCountCI(0);
    expect(lower).toBe(0);
    expect(Math.abs(upper - -Math.log(0.025))).toBeLessThan(1e-10);
  });

  it('rejects a count that is not a whole number ≥ 0', () => {
    expect(() => poissonCountCI(-1)).toThrow(InvalidInputError);
    expect(() => poissonCountCI(2.5)).toThrow(/whole number/);
  });
});

/** `n` dates spread over the days `fromAgo`, `fromAgo + step`, … before `today`. */
function datesAgo(today: string, n: number, fromAgo: number, step: number): string[] {
  return Array.from({ length: n }, (_, i) => addDays(today, -(fromAgo + i * step)));
}

describe('projectTargetDate', () => {
  const today = '2026-06-30';
  // 30 randomised in the last 90 days (0, 3, …, 87 days ago) and 70 earlier (90 … 159 days ago).
  const recent = datesAgo(today, 30, 0, 3);
  const earlier = datesAgo(today, 70, 90, 1);
  const dates = [...earlier, ...recent];

  it('hand-built scenario: 100 so far, 30 in the last 90 days, target 160 → 60 to go at 1/3 a day = 180 days', () => {
    const p = projectTargetDate({ randomisedDates: dates, target: 160, today });
    expect(p.remaining).toBe(60);
    expect(p.rate).toBeCloseTo(1 / 3, 15);
    expect(p.projected).toBe(addDays(today, 180));
    expect(p.projected).toBe('2026-12-27');
  });

  it('the interval of the rate contains the rate and gives the projected date an interval around it', () => {
    const p = projectTargetDate({ randomisedDates: dates, target: 160, today });
    expect(p.rateCI[0]).toBeLessThan(p.rate);
    expect(p.rateCI[1]).toBeGreaterThan(p.rate);
    const [early, late] = p.projectedCI;
    expect(early).not.toBeNull();
    expect(late).not.toBeNull();
    expect(early! < p.projected!).toBe(true);
    expect(late! > p.projected!).toBe(true);
    // The earlier date comes from the upper rate limit, the later one from the lower (Garwood limits for k = 30).
    const upperCount = jStat.chisquare.inv(0.975, 62) / 2;
    const lowerCount = jStat.chisquare.inv(0.025, 60) / 2;
    expect(p.rateCI[0]).toBeCloseTo(lowerCount / 90, 14);
    expect(p.rateCI[1]).toBeCloseTo(upperCount / 90, 14);
    expect(early).toBe(addDays(today, Math.ceil((60 * 90) / upperCount)));
    expect(late).toBe(addDays(today, Math.ceil((60 * 90) / lowerCount)));
  });

  it('counts today but not the day windowDays ago, and takes the default window of 90 days', () => {
    const onEdge = [addDays(today, -90), addDays(today, -89), today];
    const p = projectTargetDate({ randomisedDates: onEdge, target: 10, today });
    expect(p.rate).toBeCloseTo(2 / 90, 15);
    const q = projectTargetDate({ randomisedDates: onEdge, target: 10, today, windowDays: 91 });
    expect(q.rate).toBeCloseTo(3 / 91, 15);
  });

  it('uses a custom window for the rate and the whole list for the remaining count', () => {
    // 30 in the last 90 days of which 10 in the last 30 (0, 3, …, 27 days ago).
    const p = projectTargetDate({ randomisedDates: dates, target: 160, today, windowDays: 30 });
    expect(p.rate).toBeCloseTo(10 / 30, 15);
    expect(p.remaining).toBe(60);
    expect(p.projected).toBe(addDays(today, 180));
  });

  it('nobody randomised in the window: rate 0, projected date null, late bound null', () => {
    const p = projectTargetDate({ randomisedDates: earlier, target: 160, today });
    expect(p.rate).toBe(0);
    expect(p.rateCI[0]).toBe(0);
    expect(p.rateCI[1]).toBeCloseTo(-Math.log(0.025) / 90, 12);
    expect(p.remaining).toBe(90);
    expect(p.projected).toBeNull();
    expect(p.projectedCI[0]).toBe(addDays(today, Math.ceil((90 * 90) / -Math.log(0.025))));
    expect(p.projectedCI[1]).toBeNull();
  });

  it('target already reached: remaining 0 and projected today', () => {
    const p = projectTargetDate({ randomisedDates: dates, target: 100, today });
    expect(p.remaining).toBe(0);
    expect(p.projected).toBe(today);
    expect(p.projectedCI).toEqual([today, today]);
    expect(projectTargetDate({ randomisedDates: dates, target: 80, today }).remaining).toBe(0);
  });

  it('an empty list with a target projects nothing', () => {
    const p = projectTargetDate({ randomisedDates: [], target: 5, today });
    expect(p.remaining).toBe(5);
    expect(p.projected).toBeNull();
  });

  it('a date beyond the last calendar date is reported as null, not as an error', () => {
    // 20 000 to go at 1 per 90 days is about 4 900 years; at the lower rate limit it is past 9999-12-31.
    const p = projectTargetDate({ randomisedDates: [today], target: 20_001, today });
    expect(p.projected).not.toBeNull();
    expect(p.projectedCI[1]).toBeNull();
  });

  it('rejects invalid input with a message naming the item', () => {
    expect(() => projectTargetDate({ randomisedDates: ['2026-07-01'], target: 10, today })).toThrow(
      /Item 1 of the randomisation dates \(2026-07-01\) is after today/,
    );
    expect(() => projectTargetDate({ randomisedDates: ['2026-02-30'], target: 10, today })).toThrow(InvalidInputError);
    expect(() => projectTargetDate({ randomisedDates: [], target: 0, today })).toThrow(/recruitment target/);
    expect(() => projectTargetDate({ randomisedDates: [], target: 10, today, windowDays: 0 })).toThrow(/windowDays/);
    expect(() => projectTargetDate({ randomisedDates: [], target: 10, today: '30/06/2026' })).toThrow(/Today/);
  });
});

describe('cumulativeByMonth', () => {
  const dates = ['2025-12-15', '2026-01-02', '2026-01-31', '2026-03-01', '2026-05-01'];

  it('counts per month and keeps a running total that includes earlier months', () => {
    expect(cumulativeByMonth(dates, '2026-01', '2026-04')).toEqual([
      { month: '2026-01', count: 2, cumulative: 3 },
      { month: '2026-02', count: 0, cumulative: 3 },
      { month: '2026-03', count: 1, cumulative: 4 },
      { month: '2026-04', count: 0, cumulative: 4 },
    ]);
  });

  it('crosses a year boundary', () => {
    expect(cumulativeByMonth(dates, '2025-11', '2026-02').map((m) => [m.month, m.count, m.cumulative])).toEqual([
      ['2025-11', 0, 0],
      ['2025-12', 1, 1],
      ['2026-01', 2, 3],
      ['2026-02', 0, 3],
    ]);
  });

  it('rejects bad months and a reversed range', () => {
    expect(() => cumulativeByMonth(dates, '2026-13', '2027-01')).toThrow(/first month/);
    expect(() => cumulativeByMonth(dates, '2026-04', '2026-01')).toThrow(/must not be after/);
    expect(() => cumulativeByMonth(['2026-1-5'], '2026-01', '2026-02')).toThrow(/Item 1/);
  });
});

describe('plannedLine', () => {
  it('rises linearly to the target over the planned months', () => {
    expect(plannedLine({ start: '2026-01-15', months: 4, target: 160 })).toEqual([
      { month: '2026-01', planned: 40 },
      { month: '2026-02', planned: 80 },
      { month: '2026-03', planned: 120 },
      { month: '2026-04', planned: 160 },
    ]);
  });

  it('rounds to whole participants and ends exactly on the target across a year boundary', () => {
    expect(plannedLine({ start: '2025-11-01', months: 3, target: 10 })).toEqual([
      { month: '2025-11', planned: 3 },
      { month: '2025-12', planned: 7 },
      { month: '2026-01', planned: 10 },
    ]);
  });

  it('rejects invalid input', () => {
    expect(() => plannedLine({ start: '2026-01-15', months: 0, target: 160 })).toThrow(InvalidInputError);
    expect(() => plannedLine({ start: '2026-1-15', months: 4, target: 160 })).toThrow(/start date/);
    expect(() => plannedLine({ start: '2026-01-15', months: 4, target: -1 })).toThrow(/recruitment target/);
    expect(() => plannedLine({ start: '9999-06-01', months: 12, target: 10 })).toThrow(/past the year 9999/);
  });
});
