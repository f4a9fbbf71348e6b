import { describe, it, expect } from 'vitest';
import {
  DEFAULT_WAKING_HOURS,
  EAM,
  EPM,
  InvalidInputError,
  phaseAt,
  postOpWeek,
  sessionsPrescribedPerDay,
  type Prescription,
  type Programme,
} from '@/lib/therapy';

describe('phaseAt', () => {
  it('EPM boundaries: day 0 before the first phase, 1 and 28 in the first, 29 in the second, 84 in the last, 85 after the end', () => {
    expect(phaseAt(EPM, 0)).toBeNull();
    expect(phaseAt(EPM, 1)!.key).toBe('passive_in_splint');
    expect(phaseAt(EPM, 28)!.key).toBe('passive_in_splint');
    expect(phaseAt(EPM, 29)!.key).toBe('active_in_splint');
    expect(phaseAt(EPM, 42)!.key).toBe('active_in_splint');
    expect(phaseAt(EPM, 43)!.key).toBe('splint_off');
    expect(phaseAt(EPM, 84)!.key).toBe('strengthening');
    expect(phaseAt(EPM, 85)).toBeNull();
  });

  it('EAM boundaries: rest on days 1–2, early active motion from day 3', () => {
    expect(phaseAt(EAM, 2)!.key).toBe('post_op_rest');
    expect(phaseAt(EAM, 3)!.key).toBe('early_active');
  });

  it('an open-ended last phase covers every later day', () => {
    const p: Programme = structuredClone(EPM);
    p.phases[p.phases.length - 1].toDay = null;
    expect(phaseAt(p, 700)!.key).toBe('strengthening');
  });

  it('a programme starting on day 0 covers day 0', () => {
    const p: Programme = structuredClone(EPM);
    p.phases[0].fromDay = 0;
    expect(phaseAt(p, 0)!.key).toBe('passive_in_splint');
  });

  it.each([-1, 1.5, Number.NaN])('rejects post-op day %s', (day) => {
    expect(() => phaseAt(EPM, day)).toThrow(InvalidInputError);
  });
});

describe('postOpWeek', () => {
  it('day 0 is week 0, days 1–7 week 1, day 8 week 2, day 28 week 4, day 29 week 5', () => {
    expect([0, 1, 7, 8, 14, 15, 28, 29, 84].map(postOpWeek)).toEqual([0, 1, 1, 2, 2, 3, 4, 5, 12]);
  });
});

describe('sessionsPrescribedPerDay', () => {
  const rx = (frequency: Prescription['frequency'], kind: Prescription['kind'] = 'passive_flexion'): Prescription => ({ kind, repetitions: 10, frequency });

  it('no exercises → 0 sessions', () => {
    expect(sessionsPrescribedPerDay([])).toBe(0);
  });

  it('sessionsPerDay is taken as given', () => {
    expect(sessionsPrescribedPerDay([rx({ sessionsPerDay: 6 })])).toBe(6);
  });

  it('every 4 hours in the default 16 waking hours → 4; hourly → 16', () => {
    expect(DEFAULT_WAKING_HOURS).toBe(16);
    expect(sessionsPrescribedPerDay([rx({ everyHours: 4 })])).toBe(4);
    expect(sessionsPrescribedPerDay([rx({ everyHours: 1 })])).toBe(16);
  });

  it('every 3 hours in 14 waking hours → floor(14 / 3) = 4', () => {
    expect(sessionsPrescribedPerDay([rx({ everyHours: 3, wakingHours: 14 })])).toBe(4);
  });

  it('several frequencies → the largest, because exercises are done together in one session', () => {
    expect(sessionsPrescribedPerDay([rx({ everyHours: 4 }), rx({ sessionsPerDay: 6 }, 'active_extension')])).toBe(6);
    expect(sessionsPrescribedPerDay([rx({ everyHours: 1 }), rx({ everyHours: 4 }, 'active_extension')])).toBe(16);
  });

  it('rejects a frequency that gives no session or makes no sense', () => {
    expect(() => sessionsPrescribedPerDay([rx({ everyHours: 0 })])).toThrow(InvalidInputError);
    expect(() => sessionsPrescribedPerDay([rx({ everyHours: 18 })])).toThrow(/no session/);
    expect(() => sessionsPrescribedPerDay([rx({ sessionsPerDay: 2.5 })])).toThrow(/sessionsPerDay/);
  });
});
