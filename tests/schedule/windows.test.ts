import { describe, it, expect } from 'vitest';
import {
  addDays,
  assignToWindow,
  studyDay,
  studyDayDate,
  visitStatus,
  visitWindow,
  windowsOverlap,
  DEFAULT_MISSED_AFTER_DAYS,
  InvalidInputError,
} from '@/lib/schedule';

describe('visitWindow', () => {
  // VW-E1 and VW-E3 are written in study days (reference = day 1). visitWindow counts from day0 = day 0,
  // so with day0 = the reference date a target study day N is offsetDays = N − 1.
  const REF = '2024-02-20';

  it('VW-E1 (published-values §6, computed in UTC): Week 2, study day 15 ± 3 → 2024-03-05, window 2024-03-02 to 2024-03-08, crossing 29 Feb 2024', () => {
    const w = visitWindow(REF, { offsetDays: 15 - 1, before: 3, after: 3 });
    expect(w).toEqual({ target: '2024-03-05', earliest: '2024-03-02', latest: '2024-03-08' });
    expect([studyDay(REF, w.earliest), studyDay(REF, w.target), studyDay(REF, w.latest)]).toEqual([12, 15, 18]);
  });

  it('VW-E3 (published-values §6, computed in UTC): Week 12, study day 85 ± 7 → 2024-05-14, window 2024-05-07 to 2024-05-21', () => {
    const w = visitWindow(REF, { offsetDays: 85 - 1, before: 7, after: 7 });
    expect(w).toEqual({ target: '2024-05-14', earliest: '2024-05-07', latest: '2024-05-21' });
    expect([studyDay(REF, w.earliest), studyDay(REF, w.latest)]).toEqual([78, 92]);
  });

  it('puts the same visit on different dates in a leap year and the year before', () => {
    expect(visitWindow('2024-02-20', { offsetDays: 14, before: 3, after: 3 }).target).toBe('2024-03-05');
    expect(visitWindow('2023-02-20', { offsetDays: 14, before: 3, after: 3 }).target).toBe('2023-03-06');
    expect(visitWindow('2024-02-29', { offsetDays: 0, before: 0, after: 3 })).toEqual({
      target: '2024-02-29', earliest: '2024-02-29', latest: '2024-03-03',
    });
  });

  it('crosses month ends and the year end', () => {
    // Repair on 31 January: "one month" taken as 28 or 30 days lands differently in leap and other years.
    expect(visitWindow('2024-01-31', { offsetDays: 28, before: 3, after: 3 })).toEqual({
      target: '2024-02-28', earliest: '2024-02-25', latest: '2024-03-02',
    });
    expect(visitWindow('2023-01-31', { offsetDays: 28, before: 3, after: 3 })).toEqual({
      target: '2023-02-28', earliest: '2023-02-25', latest: '2023-03-03',
    });
    expect(visitWindow('2024-01-31', { offsetDays: 30, before: 0, after: 0 }).target).toBe('2024-03-01');
    expect(visitWindow('2023-12-20', { offsetDays: 14, before: 3, after: 3 })).toEqual({
      target: '2024-01-03', earliest: '2023-12-31', latest: '2024-01-06',
    });
    expect(visitWindow('2023-12-31', { offsetDays: 1, before: 1, after: 0 })).toEqual({
      target: '2024-01-01', earliest: '2023-12-31', latest: '2024-01-01',
    });
  });

  it('builds the demo schedule (day 0 = repair): week 12 ± 7 and week 26 ± 14', () => {
    expect(visitWindow('2024-02-20', { offsetDays: 84, before: 7, after: 7 })).toEqual({
      target: '2024-05-14', earliest: '2024-05-07', latest: '2024-05-21',
    });
    expect(visitWindow('2024-02-20', { offsetDays: 182, before: 14, after: 14 })).toEqual({
      target: '2024-08-20', earliest: '2024-08-06', latest: '2024-09-03',
    });
  });

  it('rejects invalid definitions', () => {
    expect(() => visitWindow('2024-02-30', { offsetDays: 1, before: 0, after: 0 })).toThrow(InvalidInputError);
    expect(() => visitWindow('2024-02-20', { offsetDays: 1.5, before: 0, after: 0 })).toThrow(/visit offset/);
    expect(() => visitWindow('2024-02-20', { offsetDays: 14, before: -1, after: 0 })).toThrow(/before the target/);
    expect(() => visitWindow('2024-02-20', { offsetDays: 14, before: 0, after: Number.NaN })).toThrow(/after the target/);
  });
});

describe('VW-3 window assignment (admiral vignette "Visit and Period Variables", windows confirmed, assignments derived)', () => {
  // Windows in study days (AWLO..AWHI, target AWTARGET), turned into dates from a reference date.
  const REF = '2024-02-20';
  const defs: [string, number, number, number][] = [
    ['BASELINE', -30, 1, 1],
    ['WEEK 1', 2, 7, 5],
    ['WEEK 2', 8, 15, 11],
    ['WEEK 3', 16, 22, 19],
    ['WEEK 4', 23, 30, 26],
  ];
  const windows = defs.map(([id, lo, hi, target]) => ({
    id,
    earliest: studyDayDate(REF, lo),
    latest: studyDayDate(REF, hi),
    target: studyDayDate(REF, target),
  }));

  it('assigns ADY −33 → none, −2 → BASELINE, 3 → WEEK 1, 24 → WEEK 4, missing → none', () => {
    const at = (ady: number) => assignToWindow(studyDayDate(REF, ady), windows);
    expect(at(-33)).toBeNull();
    expect(at(-2)).toBe('BASELINE');
    expect(at(3)).toBe('WEEK 1');
    expect(at(24)).toBe('WEEK 4');
    expect(assignToWindow(null, windows)).toBeNull();
    expect(assignToWindow(undefined, windows)).toBeNull();
  });

  it('includes both edges of each window (AWLO <= ADY <= AWHI)', () => {
    for (const [id, lo, hi] of defs) {
      expect(assignToWindow(studyDayDate(REF, lo), windows)).toBe(id);
      expect(assignToWindow(studyDayDate(REF, hi), windows)).toBe(id);
    }
    expect(assignToWindow(studyDayDate(REF, -31), windows)).toBeNull();
    expect(assignToWindow(studyDayDate(REF, 31), windows)).toBeNull();
  });

  it('refuses overlapping windows (VW-6, common practice, no source)', () => {
    const overlapping = [...windows, { id: 'EXTRA', earliest: windows[1].latest, latest: addDays(windows[1].latest, 3), target: windows[1].latest }];
    expect(() => assignToWindow('2024-03-01', overlapping)).toThrow(/"WEEK 1" and "EXTRA" overlap/);
  });
});

describe('windowsOverlap', () => {
  const w = (earliest: string, latest: string) => ({ earliest, latest, target: earliest });
  it('counts a shared day as overlap, adjacent windows as not', () => {
    expect(windowsOverlap(w('2024-03-01', '2024-03-08'), w('2024-03-08', '2024-03-12'))).toBe(true);
    expect(windowsOverlap(w('2024-03-08', '2024-03-12'), w('2024-03-01', '2024-03-08'))).toBe(true);
    expect(windowsOverlap(w('2024-03-01', '2024-03-08'), w('2024-03-09', '2024-03-12'))).toBe(false);
    expect(windowsOverlap(w('2024-03-09', '2024-03-12'), w('2024-03-01', '2024-03-08'))).toBe(false);
    expect(windowsOverlap(w('2024-03-01', '2024-03-31'), w('2024-03-10', '2024-03-11'))).toBe(true);
    expect(windowsOverlap(w('2024-02-28', '2024-02-29'), w('2024-03-01', '2024-03-02'))).toBe(false);
  });
  it('rejects a window whose dates are out of order', () => {
    expect(() => windowsOverlap({ target: '2024-03-05', earliest: '2024-03-08', latest: '2024-03-02' }, w('2024-03-01', '2024-03-02'))).toThrow(InvalidInputError);
  });
});

describe('visitStatus', () => {
  // VW-E1 window: earliest 2024-03-02, target 2024-03-05, latest 2024-03-08.
  const W = { target: '2024-03-05', earliest: '2024-03-02', latest: '2024-03-08' };

  it('uses 28 days as the default grace period (common practice, no source)', () => {
    expect(DEFAULT_MISSED_AFTER_DAYS).toBe(28);
  });

  it('moves upcoming → open → overdue → missed on the boundary days', () => {
    expect(visitStatus(W, '2024-02-20')).toBe('upcoming');
    expect(visitStatus(W, '2024-03-01')).toBe('upcoming'); // earliest − 1
    expect(visitStatus(W, '2024-03-02')).toBe('open'); // earliest
    expect(visitStatus(W, '2024-03-05')).toBe('open'); // target
    expect(visitStatus(W, '2024-03-08')).toBe('open'); // latest
    expect(visitStatus(W, '2024-03-09')).toBe('overdue'); // latest + 1
    expect(visitStatus(W, addDays(W.latest, 28))).toBe('overdue'); // latest + 28 = 2024-04-05
    expect(addDays(W.latest, 28)).toBe('2024-04-05');
    expect(visitStatus(W, addDays(W.latest, 29))).toBe('missed'); // latest + 29
    expect(visitStatus(W, '2025-01-01')).toBe('missed');
  });

  it('reports a completed visit as done inside the window and done-out-of-window outside, whatever today is', () => {
    expect(visitStatus(W, '2024-03-02', '2024-03-02')).toBe('done'); // on earliest
    expect(visitStatus(W, '2024-03-20', '2024-03-08')).toBe('done'); // on latest
    expect(visitStatus(W, '2024-06-01', '2024-03-05')).toBe('done');
    expect(visitStatus(W, '2024-03-01', '2024-03-01')).toBe('done-out-of-window'); // earliest − 1
    expect(visitStatus(W, '2024-03-09', '2024-03-09')).toBe('done-out-of-window'); // latest + 1
    expect(visitStatus(W, '2024-06-01', '2024-04-30')).toBe('done-out-of-window');
  });

  it('honours missedAfterDays', () => {
    expect(visitStatus(W, '2024-03-09', undefined, { missedAfterDays: 0 })).toBe('missed');
    expect(visitStatus(W, '2024-03-08', undefined, { missedAfterDays: 0 })).toBe('open');
    expect(visitStatus(W, addDays(W.latest, 7), undefined, { missedAfterDays: 7 })).toBe('overdue');
    expect(visitStatus(W, addDays(W.latest, 8), undefined, { missedAfterDays: 7 })).toBe('missed');
    expect(visitStatus(W, addDays(W.latest, 29), undefined, {})).toBe('missed');
  });

  it('rejects invalid input', () => {
    expect(() => visitStatus(W, '2024-02-30')).toThrow(InvalidInputError);
    expect(() => visitStatus(W, '2024-03-05', '2024-3-5')).toThrow(/completion date/);
    expect(() => visitStatus(W, '2024-03-05', undefined, { missedAfterDays: -1 })).toThrow(/missedAfterDays/);
    expect(() => visitStatus(W, '2024-03-05', undefined, { missedAfterDays: 1.5 })).toThrow(InvalidInputError);
    expect(() => visitStatus({ ...W, earliest: '2024-03-06' }, '2024-03-05')).toThrow(/earliest ≤ target ≤ latest/);
    expect(() => visitStatus({ ...W, latest: '' }, '2024-03-05')).toThrow(InvalidInputError);
  });
});
