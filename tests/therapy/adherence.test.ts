import { describe, it, expect } from 'vitest';
import {
  EAM,
  EPM,
  InvalidInputError,
  adherence,
  applyProgression,
  fourHourlyDorsalBlock,
  type SessionLog,
} from '@/lib/therapy';

// n logged sessions on one post-op day, each with passive flexion and active extension done.
function sessionsOn(postOpDay: number, n: number): SessionLog[] {
  return Array.from({ length: n }, () => ({
    postOpDay,
    exercises: [
      { kind: 'passive_flexion' as const, repetitions: 10 },
      { kind: 'active_extension' as const, repetitions: 10 },
    ],
  }));
}

function plan(perDay: Record<number, number>): SessionLog[] {
  return Object.entries(perDay).flatMap(([day, n]) => sessionsOn(Number(day), n));
}

describe('adherence', () => {
  it('EPM week 1: 6 sessions a day prescribed for 7 days = 42; 6+6+5+4+3+3+3 = 30 logged → 30/42 = 71.43 %', () => {
    const r = adherence(EPM, plan({ 1: 6, 2: 6, 3: 5, 4: 4, 5: 3, 6: 3, 7: 3 }), 1, 7);
    expect(r.weeks).toHaveLength(1);
    expect(r.weeks[0]).toMatchObject({ week: 1, fromDay: 1, toDay: 7, prescribed: 42, logged: 30 });
    expect(r.weeks[0].percent).toBeCloseTo(71.43, 2);
    expect(r.total.prescribed).toBe(42);
    expect(r.total.logged).toBe(30);
    expect(r.total.percent).toBeCloseTo((30 / 42) * 100, 10);
  });

  it('extra sessions on a day count only up to the prescribed 6: day 1 has 9 logged (counts 6), day 2 has 2 → 8/12 = 66.67 %', () => {
    const r = adherence(EPM, plan({ 1: 9, 2: 2 }), 1, 2);
    expect(r.total.prescribed).toBe(12);
    expect(r.total.logged).toBe(8);
    expect(r.total.percent).toBeCloseTo(66.67, 2);
  });

  it('a full week of 6 a day plus extras stays at 100 %', () => {
    const r = adherence(EPM, plan({ 1: 6, 2: 8, 3: 6, 4: 6, 5: 12, 6: 6, 7: 6 }), 1, 7);
    expect(r.total).toEqual({ prescribed: 42, logged: 42, percent: 100 });
  });

  it('EAM days 0–14, per week and total: day 0 and the rest days 1–2 prescribe nothing, so sessions logged then count 0', () => {
    const logs = plan({
      0: 1, // day of repair: outside every phase
      1: 2, // rest phase: no exercises prescribed
      3: 5, 4: 5, 5: 5, 6: 5, 7: 5, // 5 of 6 on each of days 3–7 = 25 of 30
      8: 6, 9: 6, 10: 8, 11: 6, 13: 6, 14: 6, // day 10 capped at 6, day 12 none = 36 of 42
    });
    const r = adherence(EAM, logs, 0, 14);
    expect(r.weeks.map(({ percent, ...w }) => w)).toEqual([
      { week: 0, fromDay: 0, toDay: 0, prescribed: 0, logged: 0 },
      { week: 1, fromDay: 1, toDay: 7, prescribed: 30, logged: 25 },
      { week: 2, fromDay: 8, toDay: 14, prescribed: 42, logged: 36 },
    ]);
    expect(r.weeks[0].percent).toBeNull();
    expect(r.weeks[1].percent).toBeCloseTo(83.33, 2); // 25 / 30
    expect(r.weeks[2].percent).toBeCloseTo(85.71, 2); // 36 / 42
    expect(r.total.prescribed).toBe(72);
    expect(r.total.logged).toBe(61);
    expect(r.total.percent).toBeCloseTo(84.72, 2); // 61 / 72
  });

  it('days after the programme ends prescribe nothing: EPM days 80–90, strengthening asks for 4 a day on days 80–84 = 20', () => {
    const r = adherence(EPM, plan({ 82: 4, 86: 3 }), 80, 90);
    expect(r.weeks.map(({ percent, ...w }) => w)).toEqual([
      { week: 12, fromDay: 80, toDay: 84, prescribed: 20, logged: 4 },
      { week: 13, fromDay: 85, toDay: 90, prescribed: 0, logged: 0 },
    ]);
    expect(r.weeks[0].percent).toBeCloseTo(20, 10);
    expect(r.weeks[1].percent).toBeNull();
    expect(r.total).toEqual({ prescribed: 20, logged: 4, percent: 20 });
  });

  it('a range wholly outside the programme has no percentage', () => {
    expect(adherence(EPM, plan({ 100: 3 }), 90, 100).total).toEqual({ prescribed: 0, logged: 0, percent: null });
  });

  it('a log with no exercise done (empty, or every repetition 0) is not a session; logs outside the range are ignored', () => {
    const logs: SessionLog[] = [
      ...sessionsOn(1, 3),
      { postOpDay: 1, exercises: [] },
      { postOpDay: 1, exercises: [{ kind: 'passive_flexion', repetitions: 0 }] },
      ...sessionsOn(3, 6),
    ];
    const r = adherence(EPM, logs, 1, 2);
    expect(r.total).toMatchObject({ prescribed: 12, logged: 3 });
    expect(r.total.percent).toBeCloseTo(25, 10);
  });

  it('follows the phases after progression: days 57–63 are strengthening (3 a day = 21) unless poor glide kept the splint, then light use (4 a day = 28)', () => {
    const logs = plan({ 57: 3, 58: 3, 59: 3, 60: 3, 61: 3, 62: 3, 63: 3 });
    expect(adherence(fourHourlyDorsalBlock, logs, 57, 63).total).toEqual({ prescribed: 21, logged: 21, percent: 100 });
    const extended = applyProgression(fourHourlyDorsalBlock, [{ measure: 'tendon_glide', value: 'poor', atDay: 28 }]);
    const r = adherence(extended, logs, 57, 63).total;
    expect(r).toMatchObject({ prescribed: 28, logged: 21 });
    expect(r.percent).toBeCloseTo(75, 10);
  });

  it('rejects a reversed range and unusable logs, naming the log', () => {
    expect(() => adherence(EPM, [], 10, 9)).toThrow(InvalidInputError);
    expect(() => adherence(EPM, [{ postOpDay: 3, exercises: [{ kind: 'passive_flexion', repetitions: -1 }] }], 1, 7)).toThrow(/Session 1 \(day 3\).*repetitions/);
    expect(() => adherence(EPM, [{ postOpDay: 3, exercises: [{ kind: 'squeeze' as 'resisted', repetitions: 5 }] }], 1, 7)).toThrow(/unknown exercise "squeeze"/);
  });
});
