import { describe, it, expect, afterEach } from 'vitest';
import {
  addDays,
  daysBetween,
  isValidDate,
  postOpDay,
  studyDay,
  studyDayDate,
  InvalidInputError,
} from '@/lib/schedule';

describe('isValidDate and date validation', () => {
  it('accepts only real calendar dates written YYYY-MM-DD', () => {
    for (const ok of ['2024-02-29', '2000-02-29', '2023-12-31', '0001-01-01', '9999-12-31']) expect(isValidDate(ok)).toBe(true);
    const bad = ['2024-02-30', '2023-02-29', '1900-02-29', '2024-2-1', '', '2024-13-01', '2024-00-10', '2024-01-00',
      '2024-04-31', '2024-01-32', ' 2024-01-01', '2024-01-01T00:00:00Z', '24-01-01', '0000-01-01', '２０２４-01-01'];
    for (const b of bad) expect(isValidDate(b), b).toBe(false);
    expect(isValidDate(20240101 as unknown as string)).toBe(false);
  });

  it('throws InvalidInputError naming the bad date', () => {
    for (const b of ['2024-02-30', '2024-2-1', '']) {
      expect(() => addDays(b, 1)).toThrow(InvalidInputError);
      expect(() => daysBetween('2024-01-01', b)).toThrow(InvalidInputError);
      expect(() => studyDay(b, '2024-01-01')).toThrow(InvalidInputError);
      expect(() => postOpDay('2024-01-01', b)).toThrow(InvalidInputError);
    }
    expect(() => addDays('2024-02-30', 1)).toThrow(/"2024-02-30"/);
    expect(() => addDays('2024-01-01', 1.5)).toThrow(InvalidInputError);
    expect(() => addDays('9999-12-31', 1)).toThrow(InvalidInputError);
  });
});

describe('addDays and daysBetween', () => {
  it('handles leap days: 29 Feb 2024 exists, 2023 has none', () => {
    expect(addDays('2024-02-28', 1)).toBe('2024-02-29');
    expect(addDays('2024-02-29', 1)).toBe('2024-03-01');
    expect(addDays('2023-02-28', 1)).toBe('2023-03-01');
    expect(daysBetween('2024-02-01', '2024-03-01')).toBe(29);
    expect(daysBetween('2023-02-01', '2023-03-01')).toBe(28);
    expect(daysBetween('2024-01-01', '2025-01-01')).toBe(366);
    expect(daysBetween('2023-01-01', '2024-01-01')).toBe(365);
    expect(addDays('2000-02-28', 1)).toBe('2000-02-29'); // divisible by 400: leap
    expect(addDays('2100-02-28', 1)).toBe('2100-03-01'); // divisible by 100 only: not leap
  });

  it('crosses month and year ends', () => {
    expect(addDays('2024-01-31', 1)).toBe('2024-02-01');
    expect(addDays('2024-01-31', 29)).toBe('2024-02-29');
    expect(addDays('2024-01-31', 30)).toBe('2024-03-01');
    expect(addDays('2023-01-31', 28)).toBe('2023-02-28');
    expect(addDays('2023-01-31', 30)).toBe('2023-03-02');
    expect(addDays('2024-04-30', 1)).toBe('2024-05-01');
    expect(addDays('2023-12-31', 1)).toBe('2024-01-01');
    expect(addDays('2024-01-01', -1)).toBe('2023-12-31');
    expect(addDays('2024-03-01', -1)).toBe('2024-02-29');
    expect(daysBetween('2023-12-31', '2024-01-01')).toBe(1);
    expect(daysBetween('2024-01-01', '2023-12-31')).toBe(-1);
    expect(addDays('2024-05-17', 0)).toBe('2024-05-17');
  });

  it('agrees with UTC day numbers (Date.UTC / 86400000) for every day from 1899 to 2101', () => {
    const start = Date.UTC(1899, 0, 1) / 86400000;
    const end = Date.UTC(2101, 11, 31) / 86400000;
    const mismatches: string[] = [];
    let checked = 0;
    for (let n = start; n <= end; n += 1) {
      const iso = new Date(n * 86400000).toISOString().slice(0, 10);
      if (!isValidDate(iso) || daysBetween('1970-01-01', iso) !== n || addDays('1970-01-01', n) !== iso) mismatches.push(iso);
      checked += 1;
    }
    expect(mismatches).toEqual([]);
    expect(checked).toBe(74144); // 1899-01-01 to 2101-12-31 inclusive
    expect(daysBetween('1970-01-01', '2101-12-31')).toBe(end);
  });
});

describe('time-zone independence (daylight-saving pitfall, common practice)', () => {
  const originalTz = process.env.TZ;
  afterEach(() => {
    if (originalTz === undefined) delete process.env.TZ;
    else process.env.TZ = originalTz;
  });

  it('gives the same results in zones with a daylight-saving change, so process.env.TZ is not relied upon', () => {
    const run = () => [
      daysBetween('2024-03-09', '2024-03-11'),
      daysBetween('2024-10-26', '2024-10-28'),
      addDays('2024-03-10', 1),
      addDays('2024-03-31', 1),
      addDays('2024-04-07', -1),
      studyDay('2024-03-30', '2024-04-01'),
    ];
    process.env.TZ = 'UTC';
    const utc = run();
    expect(utc).toEqual([2, 2, '2024-03-11', '2024-04-01', '2024-04-06', 3]);
    for (const tz of ['America/New_York', 'Europe/London', 'Australia/Sydney', 'Pacific/Chatham']) {
      process.env.TZ = tz;
      expect(run(), tz).toEqual(utc);
    }
    // Proof that the zone change really took effect: local midnight to midnight across the US
    // spring change is 23 hours, the very drift that integer-day arithmetic must not see.
    process.env.TZ = 'America/New_York';
    expect(new Date(2024, 2, 11).getTime() - new Date(2024, 2, 10).getTime()).toBe(23 * 3600000);
  });
});

describe('postOpDay and studyDay', () => {
  it('postOpDay: the repair date is day 0', () => {
    expect(postOpDay('2024-02-20', '2024-02-20')).toBe(0);
    expect(postOpDay('2024-02-20', '2024-02-21')).toBe(1);
    expect(postOpDay('2024-02-20', '2024-02-19')).toBe(-1);
    expect(postOpDay('2024-02-20', '2024-03-05')).toBe(14);
  });

  it('VW-1 (CDISC SDTM IG, --DY study day; from memory, high confidence): reference is day 1, the day before is −1, no day 0', () => {
    const ref = '2024-02-20';
    expect(studyDay(ref, '2024-02-20')).toBe(1);
    expect(studyDay(ref, '2024-02-21')).toBe(2);
    expect(studyDay(ref, '2024-02-19')).toBe(-1);
    expect(studyDay(ref, '2024-02-18')).toBe(-2);
    for (let d = -400; d <= 400; d += 1) {
      expect(studyDay(ref, addDays(ref, d))).not.toBe(0);
      if (d !== 0) expect(studyDay(ref, studyDayDate(ref, d))).toBe(d);
    }
    expect(studyDayDate(ref, 1)).toBe(ref);
    expect(studyDayDate(ref, -1)).toBe('2024-02-19');
    expect(() => studyDayDate(ref, 0)).toThrow(/no study day 0/);
  });
});
