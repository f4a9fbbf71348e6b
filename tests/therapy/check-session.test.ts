import { describe, it, expect } from 'vitest';
import {
  EAM,
  EPM,
  InvalidInputError,
  checkSession,
  fourHourlyDorsalBlock,
  hourlyPassiveThenPlaceHold,
  minimalActiveTension,
  postOpWeek,
  type ExerciseKind,
  type SessionLog,
} from '@/lib/therapy';

const session = (postOpDay: number, kinds: ExerciseKind[], supervised?: boolean): SessionLog => ({
  postOpDay,
  exercises: kinds.map((kind) => ({ kind, repetitions: 10 })),
  ...(supervised === undefined ? {} : { supervised }),
});

describe('checkSession', () => {
  it('flags active flexion logged in EPM week 2 (day 10): the passive arm starts it on day 29', () => {
    expect(postOpWeek(10)).toBe(2);
    const flags = checkSession(EPM, session(10, ['passive_flexion', 'active_extension', 'active_flexion']));
    expect(flags).toHaveLength(1);
    expect(flags[0].kind).toBe('active_flexion');
    expect(flags[0].reason).toBe(
      'Active flexion is not yet part of the programme on day 10: phase "Passive flexion and active extension in the splint" (days 1–28) ' +
        'allows passive flexion, active extension (within the splint). It starts on day 29 (phase "Active motion in the splint").',
    );
  });

  it('flags resisted exercise logged in EAM week 3 (day 18): it starts on day 57', () => {
    expect(postOpWeek(18)).toBe(3);
    const flags = checkSession(EAM, session(18, ['place_and_hold', 'resisted']));
    expect(flags.map((f) => f.kind)).toEqual(['resisted']);
    expect(flags[0].reason).toMatch(/^Resisted exercise is not yet part of the programme on day 18: phase "Place-and-hold and light active flexion in the splint" \(days 3–28\)/);
    expect(flags[0].reason).toMatch(/It starts on day 57 \(phase "Graded strengthening"\)\.$/);
  });

  it('flags a supervised-only exercise logged without supervision in minimalActiveTension week 2 (day 10)', () => {
    expect(postOpWeek(10)).toBe(2);
    const flags = checkSession(minimalActiveTension, session(10, ['passive_flexion', 'place_and_hold'], false));
    expect(flags).toEqual([
      {
        kind: 'place_and_hold',
        reason: 'Place and hold is to be done only with the therapist in phase "Active motion with the therapist only" (days 1–21); this session on day 10 is not recorded as supervised.',
      },
    ]);
  });

  it('a session that does not say it was supervised counts as unsupervised for supervised-only exercises', () => {
    expect(checkSession(minimalActiveTension, session(10, ['active_flexion'])).map((f) => f.kind)).toEqual(['active_flexion']);
  });

  it('accepts correct sessions', () => {
    expect(checkSession(EPM, session(10, ['passive_flexion', 'active_extension']))).toEqual([]);
    expect(checkSession(EAM, session(18, ['place_and_hold', 'active_flexion', 'active_extension']))).toEqual([]);
    expect(checkSession(minimalActiveTension, session(10, ['passive_flexion', 'place_and_hold', 'active_flexion'], true))).toEqual([]);
    // From day 22 the same active exercises may be done at home.
    expect(checkSession(minimalActiveTension, session(22, ['place_and_hold', 'active_flexion'], false))).toEqual([]);
  });

  it('an exercise the phase no longer prescribes says when it stopped', () => {
    const flags = checkSession(hourlyPassiveThenPlaceHold, session(60, ['place_and_hold']));
    expect(flags).toHaveLength(1);
    expect(flags[0].reason).toMatch(/^Place and hold is no longer part of the programme on day 60: it stopped after day 42 \(phase "Active flexion added"\); phase "Resisted exercise" \(days 50–84\)/);
  });

  it('an exercise the programme never prescribes says so', () => {
    const flags = checkSession(fourHourlyDorsalBlock, session(10, ['place_and_hold']));
    expect(flags[0].reason).toMatch(/^Place and hold is not part of this programme at any stage: phase "Exercises in the dorsal blocking splint" \(days 1–28\) allows passive flexion, active flexion, active extension \(within the splint\)\.$/);
  });

  it('in a phase without exercises every exercise is flagged (EAM day 2, rest)', () => {
    const flags = checkSession(EAM, session(2, ['passive_flexion']));
    expect(flags[0].reason).toMatch(/phase "Rest in the splint after surgery" \(days 1–2\) prescribes no exercises\. It starts on day 3/);
  });

  it('on a day outside the programme every exercise is flagged', () => {
    const flags = checkSession(EPM, session(90, ['active_flexion', 'tendon_gliding']));
    expect(flags.map((f) => f.kind)).toEqual(['active_flexion', 'tendon_gliding']);
    expect(flags[0].reason).toBe('Active flexion was logged on day 90, outside the programme (it runs days 1–84), so no exercise is prescribed that day.');
  });

  it('exercises logged with 0 repetitions are not checked, and a kind logged twice is flagged once', () => {
    const s: SessionLog = {
      postOpDay: 10,
      exercises: [
        { kind: 'resisted', repetitions: 0 },
        { kind: 'active_flexion', repetitions: 5 },
        { kind: 'active_flexion', repetitions: 5 },
      ],
    };
    expect(checkSession(EPM, s).map((f) => f.kind)).toEqual(['active_flexion']);
  });

  it('rejects an unusable session', () => {
    expect(() => checkSession(EPM, { postOpDay: -3, exercises: [] })).toThrow(InvalidInputError);
    expect(() => checkSession(EPM, { postOpDay: 3, exercises: [], supervised: 'yes' as unknown as boolean })).toThrow(/supervised must be true or false/);
  });
});
