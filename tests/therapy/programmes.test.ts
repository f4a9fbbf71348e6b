import { describe, it, expect } from 'vitest';
import schema from '@/forms/therapy_session/schema.json';
import {
  EAM,
  EPM,
  EXERCISE_KINDS,
  EXERCISE_LABELS,
  PROGRAMMES,
  elasticTractionPalmarPulley,
  fourHourlyDorsalBlock,
  hourlyPassiveThenPlaceHold,
  minimalActiveTension,
  phaseAt,
  postOpWeek,
  sessionsPrescribedPerDay,
  validateProgramme,
  type ExerciseKind,
  type Programme,
} from '@/lib/therapy';

const ALL: [string, Programme][] = [
  ['fourHourlyDorsalBlock', fourHourlyDorsalBlock],
  ['hourlyPassiveThenPlaceHold', hourlyPassiveThenPlaceHold],
  ['minimalActiveTension', minimalActiveTension],
  ['elasticTractionPalmarPulley', elasticTractionPalmarPulley],
  ['EPM', EPM],
  ['EAM', EAM],
];

// First post-op day on which a programme prescribes an exercise kind, or null if never.
function firstDayOf(p: Programme, kind: ExerciseKind): number | null {
  return p.phases.find((ph) => ph.exercises.some((x) => x.kind === kind))?.fromDay ?? null;
}

describe('exercise codes', () => {
  it('are exactly the kind codes of the therapy_session CRF, in the same order, with the same titles', () => {
    const options = schema.properties.exercises.items.properties.kind.oneOf;
    expect([...EXERCISE_KINDS]).toEqual(options.map((o) => o.const));
    for (const o of options) expect(EXERCISE_LABELS[o.const as ExerciseKind]).toBe(o.title);
  });
});

describe('fixtures', () => {
  it.each(ALL)('%s passes validateProgramme', (_name, p) => {
    expect(validateProgramme(p)).toBe(p);
  });

  it('PROGRAMMES holds the six fixtures keyed by programme key', () => {
    expect(Object.keys(PROGRAMMES).sort()).toEqual(
      [
        'elastic_traction_palmar_pulley',
        'four_hourly_dorsal_block',
        'hourly_passive_then_place_hold',
        'minimal_active_tension',
        'tempo_ft_eam',
        'tempo_ft_epm',
      ].sort(),
    );
    for (const [, p] of ALL) expect(PROGRAMMES[p.key]).toBe(p);
  });

  it('are frozen so no caller can change a shared fixture', () => {
    expect(Object.isFrozen(EPM)).toBe(true);
    expect(Object.isFrozen(EPM.phases[0].exercises[0])).toBe(true);
    expect(() => {
      (EPM.phases[0] as { fromDay: number }).fromDay = 5;
    }).toThrow(TypeError);
  });

  it('EPM and EAM carry the demo-study arm codes and run to day 84 (week 12)', () => {
    expect(EPM.arm).toBe('EPM');
    expect(EAM.arm).toBe('EAM');
    for (const p of [EPM, EAM]) {
      expect(p.phases[p.phases.length - 1].toDay).toBe(84);
      expect(postOpWeek(84)).toBe(12);
    }
  });

  it('EPM: passive flexion and active extension only in the dorsal blocking splint until day 28; resisted only from day 71', () => {
    const first = phaseAt(EPM, 1)!;
    expect(first.splint.type).toBe('dorsal_blocking');
    expect(first.splint.wristAngleDeg).toBeLessThan(0); // wrist held in flexion
    expect(first.exercises.map((x) => x.kind).sort()).toEqual(['active_extension', 'passive_flexion']);
    expect(phaseAt(EPM, 28)!.key).toBe(first.key);
    expect(firstDayOf(EPM, 'active_flexion')).toBe(29);
    expect(firstDayOf(EPM, 'resisted')).toBe(71);
  });

  it('EAM: place-and-hold and light active flexion in the dorsal blocking splint from day 3; resisted only from day 57', () => {
    expect(phaseAt(EAM, 2)!.exercises).toEqual([]);
    const early = phaseAt(EAM, 3)!;
    expect(early.splint.type).toBe('dorsal_blocking');
    expect(early.exercises.map((x) => x.kind)).toEqual(expect.arrayContaining(['place_and_hold', 'active_flexion']));
    expect(firstDayOf(EAM, 'place_and_hold')).toBe(3);
    expect(firstDayOf(EAM, 'active_flexion')).toBe(3);
    expect(firstDayOf(EAM, 'resisted')).toBe(57);
  });

  it('fourHourlyDorsalBlock: four sessions a day (16 waking hours / 4) of passive flexion, active flexion and active extension, wrist flexed; rule at day 28', () => {
    const first = phaseAt(fourHourlyDorsalBlock, 1)!;
    expect(first.exercises.map((x) => x.kind).sort()).toEqual(['active_extension', 'active_flexion', 'passive_flexion']);
    expect(sessionsPrescribedPerDay(first.exercises)).toBe(4);
    expect(first.splint.wristAngleDeg).toBeLessThan(0);
    expect(first.toDay).toBe(28);
    expect(fourHourlyDorsalBlock.progression).toEqual([
      expect.objectContaining({ atDay: 28, condition: { measure: 'tendon_glide', is: 'poor' }, effect: { extendPhase: first.key, byDays: 14 } }),
    ]);
  });

  it('hourlyPassiveThenPlaceHold: hourly (16 a day) passive flexion and place-and-hold with a hinged wrist exercise splint; active flexion from day 29; resisted from day 50', () => {
    const first = phaseAt(hourlyPassiveThenPlaceHold, 1)!;
    expect(sessionsPrescribedPerDay(first.exercises)).toBe(16);
    expect(first.splint.type).toBe('dorsal_blocking');
    expect(first.exerciseSplint?.type).toBe('hinged_wrist');
    expect(first.exercises.map((x) => x.kind).sort()).toEqual(['passive_flexion', 'place_and_hold']);
    expect(firstDayOf(hourlyPassiveThenPlaceHold, 'active_flexion')).toBe(29);
    expect(firstDayOf(hourlyPassiveThenPlaceHold, 'resisted')).toBe(50);
  });

  it('minimalActiveTension: in days 1–21 every active or place-and-hold exercise is supervised only, passive flexion is not', () => {
    const first = phaseAt(minimalActiveTension, 1)!;
    expect([first.fromDay, first.toDay]).toEqual([1, 21]);
    for (const x of first.exercises) expect(x.supervisedOnly === true).toBe(x.kind !== 'passive_flexion');
    expect(first.exercises.filter((x) => x.supervisedOnly).map((x) => x.kind).sort()).toEqual(['active_extension', 'active_flexion', 'place_and_hold']);
    expect(phaseAt(minimalActiveTension, 22)!.exercises.some((x) => x.supervisedOnly)).toBe(false);
  });

  it('elasticTractionPalmarPulley: hourly passive flexion by the band and active extension, supervised short holds for four weeks, splint off at day 57', () => {
    const first = phaseAt(elasticTractionPalmarPulley, 1)!;
    expect([first.fromDay, first.toDay]).toEqual([1, 28]);
    expect(sessionsPrescribedPerDay(first.exercises)).toBe(16);
    const hold = first.exercises.find((x) => x.kind === 'place_and_hold')!;
    expect(hold.supervisedOnly).toBe(true);
    expect(hold.holdSeconds).toBeLessThanOrEqual(5);
    expect(phaseAt(elasticTractionPalmarPulley, 56)!.splint.type).not.toBe('none');
    expect(phaseAt(elasticTractionPalmarPulley, 57)!.splint.type).toBe('none');
  });
});
