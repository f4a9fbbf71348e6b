import { describe, it, expect } from 'vitest';
import { EPM, InvalidInputError, fourHourlyDorsalBlock, validateProgramme, type Programme } from '@/lib/therapy';

// A mutable copy of a fixture to break on purpose.
function copy(p: Programme = EPM): Programme {
  return structuredClone(p);
}

function errorOf(fn: () => unknown): InvalidInputError {
  try {
    fn();
  } catch (e) {
    if (e instanceof InvalidInputError) return e;
    throw e;
  }
  throw new Error('expected an InvalidInputError, nothing was thrown');
}

describe('validateProgramme', () => {
  it('overlapping phases throw InvalidInputError naming both phases', () => {
    const p = copy();
    p.phases[1].fromDay = 20;
    const e = errorOf(() => validateProgramme(p));
    expect(e.code).toBe('invalid_input');
    expect(e.message).toBe('Phase "active_in_splint" (days 20–42) overlaps phase "passive_in_splint" (days 1–28).');
  });

  it('negative repetitions throw naming the phase and the exercise', () => {
    const p = copy();
    p.phases[0].exercises[0].repetitions = -5;
    const e = errorOf(() => validateProgramme(p));
    expect(e.message).toBe('Phase "passive_in_splint", exercise 1 (passive_flexion): repetitions must be a whole number from 1 to 500, got -5.');
  });

  it('a gap between phases throws naming the days not covered', () => {
    const p = copy();
    p.phases[1].fromDay = 31;
    expect(() => validateProgramme(p)).toThrow('Phase "active_in_splint" starts on day 31 but phase "passive_in_splint" ends on day 28: days 29–30 are in no phase.');
  });

  it('phases out of order throw', () => {
    const p = copy();
    p.phases = [p.phases[1], p.phases[0], ...p.phases.slice(2)];
    expect(() => validateProgramme(p)).toThrow('Phase "passive_in_splint" (days 1–28) starts before phase "active_in_splint" (days 29–42); list phases in day order.');
    const q = copy();
    [q.phases[2], q.phases[3]] = [q.phases[3], q.phases[2]];
    expect(() => validateProgramme(q)).toThrow(/Phase "splint_off" \(days 43–70\) starts before phase "strengthening"/);
  });

  it('the first phase must start on day 0 or 1', () => {
    const p = copy();
    p.phases[0].fromDay = 2;
    expect(() => validateProgramme(p)).toThrow(/Phase "passive_in_splint" is the first phase/);
  });

  it('only the last phase may be open-ended', () => {
    const p = copy();
    p.phases[0].toDay = null;
    expect(() => validateProgramme(p)).toThrow(/Phase "passive_in_splint" is open-ended but is followed by phase "active_in_splint"/);
    const q = copy();
    q.phases[q.phases.length - 1].toDay = null;
    expect(() => validateProgramme(q)).not.toThrow();
  });

  it('a phase ending before it starts throws', () => {
    const p = copy();
    p.phases[3].toDay = 60;
    expect(() => validateProgramme(p)).toThrow('Phase "strengthening" ends on day 60, before it starts on day 71.');
  });

  it('duplicate phase keys and duplicate exercises in a phase throw', () => {
    const p = copy();
    p.phases[1].key = 'passive_in_splint';
    expect(() => validateProgramme(p)).toThrow(/Phase "passive_in_splint" is given twice/);
    const q = copy();
    q.phases[0].exercises.push({ kind: 'passive_flexion', repetitions: 5, frequency: { sessionsPerDay: 2 } });
    expect(() => validateProgramme(q)).toThrow(/Phase "passive_in_splint" prescribes passive_flexion twice/);
  });

  it('unknown exercise codes, bad holds and bad frequencies throw naming the phase', () => {
    const p = copy();
    (p.phases[0].exercises[0] as { kind: string }).kind = 'active_fist';
    expect(() => validateProgramme(p)).toThrow(/Phase "passive_in_splint", exercise 1: unknown exercise "active_fist"/);
    const q = copy();
    q.phases[1].exercises[2].holdSeconds = 90;
    expect(() => validateProgramme(q)).toThrow(/Phase "active_in_splint", exercise 3 \(place_and_hold\): holdSeconds/);
    const r = copy();
    r.phases[0].exercises[0].frequency = { sessionsPerDay: 0 };
    expect(() => validateProgramme(r)).toThrow(/Phase "passive_in_splint", exercise 1 \(passive_flexion\): sessionsPerDay/);
    const s = copy();
    s.phases[0].exercises[0].frequency = { sessionsPerDay: 4, everyHours: 4 } as unknown as { sessionsPerDay: number };
    expect(() => validateProgramme(s)).toThrow(/exactly one/);
  });

  it('implausible splints throw naming the phase', () => {
    const p = copy();
    p.phases[0].splint.hoursPerDay = 25;
    expect(() => validateProgramme(p)).toThrow(/Phase "passive_in_splint": splint: hoursPerDay must be from 0 to 24, got 25/);
    const q = copy();
    q.phases[0].splint.wristAngleDeg = -120;
    expect(() => validateProgramme(q)).toThrow(/wristAngleDeg/);
    const r = copy();
    r.phases[2].splint.hoursPerDay = 8;
    expect(() => validateProgramme(r)).toThrow(/Phase "splint_off": splint: no splint \('none'\) cannot be worn 8 hours a day/);
    const s = copy();
    s.phases[0].exerciseSplint = { type: 'hinged_wrist', wristAngleDeg: 30, mcpFlexionDeg: 60, hoursPerDay: 2 };
    expect(() => validateProgramme(s)).toThrow(/Phase "passive_in_splint": the splint and the exercise splint together are worn 26 hours a day/);
  });

  it('an empty programme and a non-object throw', () => {
    expect(() => validateProgramme({ ...copy(), phases: [] })).toThrow(/needs at least one phase/);
    expect(() => validateProgramme(null)).toThrow(InvalidInputError);
  });

  it('progression rules that cannot take effect throw naming the rule', () => {
    const withRule = (effect: Programme['progression'][number]['effect'], atDay = 28): Programme => ({
      ...copy(fourHourlyDorsalBlock),
      progression: [{ id: 'r1', atDay, condition: { measure: 'tendon_glide', is: 'poor' }, effect, note: 'test rule' }],
    });
    expect(() => validateProgramme(withRule({ extendPhase: 'nowhere', byDays: 7 }))).toThrow('Progression rule "r1" cannot take effect: phase "nowhere" is not in the programme.');
    expect(() => validateProgramme(withRule({ extendPhase: 'protected', byDays: 7 }, 35))).toThrow(/phase "protected" ends on day 28, before the rule is decided on day 35/);
    expect(() => validateProgramme(withRule({ extendPhase: 'protected', byDays: 0 }))).toThrow(/Progression rule "r1": byDays/);
    expect(() => validateProgramme(withRule({ skipToPhase: 'protected' }, 10))).toThrow(/phase "protected" does not come after phase "protected"/);
    expect(() => validateProgramme(withRule({ skipToPhase: 'light_use' }, 0))).toThrow(/no phase is in force on day 0/);
    const open = withRule({ extendPhase: 'strengthening', byDays: 7 }, 60);
    open.phases[3].toDay = null;
    expect(() => validateProgramme(open)).toThrow(/phase "strengthening" is open-ended/);
  });
});
