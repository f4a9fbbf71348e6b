import { describe, it, expect } from 'vitest';
import {
  DEFAULT_FINDING_WINDOW_DAYS,
  InvalidInputError,
  applyProgression,
  fourHourlyDorsalBlock,
  phaseAt,
  validateProgramme,
  type ProgressionFinding,
  type Programme,
} from '@/lib/therapy';

const glide = (value: 'poor' | 'good', atDay: number): ProgressionFinding => ({ measure: 'tendon_glide', value, atDay });
const bounds = (p: Programme) => p.phases.map((ph) => [ph.key, ph.fromDay, ph.toDay]);

const BASE = [
  ['protected', 1, 28],
  ['splint_off', 29, 42],
  ['light_use', 43, 56],
  ['strengthening', 57, 84],
];

describe('applyProgression: splint kept two more weeks when tendon glide is poor at four weeks', () => {
  it('fixture boundaries before any finding', () => {
    expect(bounds(fourHourlyDorsalBlock)).toEqual(BASE);
  });

  it('poor glide at day 28 → splint phase to day 42 and every later phase 14 days later; the decided rule is removed', () => {
    const p = applyProgression(fourHourlyDorsalBlock, [glide('poor', 28)]);
    expect(bounds(p)).toEqual([
      ['protected', 1, 42],
      ['splint_off', 43, 56],
      ['light_use', 57, 70],
      ['strengthening', 71, 98],
    ]);
    expect(p.progression).toEqual([]);
    expect(phaseAt(p, 35)!.splint.type).toBe('dorsal_blocking');
    expect(() => validateProgramme(p)).not.toThrow();
    // The fixture itself is left as it was.
    expect(bounds(fourHourlyDorsalBlock)).toEqual(BASE);
    expect(fourHourlyDorsalBlock.progression).toHaveLength(1);
  });

  it('good glide at day 28 → rule decided but not applied: boundaries unchanged, rule removed', () => {
    const p = applyProgression(fourHourlyDorsalBlock, [glide('good', 28)]);
    expect(bounds(p)).toEqual(BASE);
    expect(p.progression).toEqual([]);
    expect(phaseAt(p, 35)!.splint.type).toBe('none');
  });

  it('no finding → nothing applied and the rule stays for a later finding', () => {
    const p = applyProgression(fourHourlyDorsalBlock, []);
    expect(bounds(p)).toEqual(BASE);
    expect(p.progression.map((r) => r.id)).toEqual(['glide_at_four_weeks']);
    expect(bounds(applyProgression(p, [glide('poor', 28)]))[0]).toEqual(['protected', 1, 42]);
  });

  it(`a finding within ±${DEFAULT_FINDING_WINDOW_DAYS} days of the rule's day decides it (week-4 visit window); one further away does not`, () => {
    expect(DEFAULT_FINDING_WINDOW_DAYS).toBe(3);
    expect(bounds(applyProgression(fourHourlyDorsalBlock, [glide('poor', 31)]))[0]).toEqual(['protected', 1, 42]);
    expect(bounds(applyProgression(fourHourlyDorsalBlock, [glide('poor', 25)]))[0]).toEqual(['protected', 1, 42]);
    const far = applyProgression(fourHourlyDorsalBlock, [glide('poor', 32)]);
    expect(bounds(far)).toEqual(BASE);
    expect(far.progression).toHaveLength(1);
  });

  it('findingWindowDays narrows the window', () => {
    expect(bounds(applyProgression(fourHourlyDorsalBlock, [glide('poor', 29)], { findingWindowDays: 0 }))).toEqual(BASE);
    expect(() => applyProgression(fourHourlyDorsalBlock, [], { findingWindowDays: -1 })).toThrow(InvalidInputError);
  });

  it('the nearest finding decides; on a tie the earlier one', () => {
    // day 29 (1 day off) beats day 26 (2 days off)
    expect(bounds(applyProgression(fourHourlyDorsalBlock, [glide('good', 26), glide('poor', 29)]))[0]).toEqual(['protected', 1, 42]);
    // day 27 and day 29 are both 1 day off: the earlier, good, decides
    expect(bounds(applyProgression(fourHourlyDorsalBlock, [glide('poor', 29), glide('good', 27)]))[0]).toEqual(['protected', 1, 28]);
  });

  it('rejects unusable findings', () => {
    expect(() => applyProgression(fourHourlyDorsalBlock, [{ measure: 'tendon_glide', value: 'fair' as 'poor', atDay: 28 }])).toThrow(/Finding 1/);
    expect(() => applyProgression(fourHourlyDorsalBlock, [glide('poor', -2)])).toThrow(InvalidInputError);
    expect(() => applyProgression(fourHourlyDorsalBlock, [glide('poor', 28), glide('good', 28)])).toThrow(/both poor and good on day 28/);
  });
});

describe('applyProgression: skipping ahead', () => {
  // A variant of the four-hourly programme: good glide at day 21 moves straight to light use.
  const skipping: Programme = {
    ...structuredClone(fourHourlyDorsalBlock),
    key: 'skip_variant',
    progression: [
      { id: 'skip_at_three_weeks', atDay: 21, condition: { measure: 'tendon_glide', is: 'good' }, effect: { skipToPhase: 'light_use' }, note: 'Good glide at three weeks: go straight to light use.' },
      { id: 'extend_splint_off', atDay: 35, condition: { measure: 'tendon_glide', is: 'poor' }, effect: { extendPhase: 'splint_off', byDays: 7 }, note: 'Poor glide at five weeks: one more week of active motion.' },
    ],
  };

  it('the variant is valid', () => {
    expect(() => validateProgramme(skipping)).not.toThrow();
  });

  it('good glide at day 21 → the phase in force ends on day 21, the skipped phase is dropped, light use starts on day 22 with its 14 days', () => {
    const p = applyProgression(skipping, [glide('good', 21)]);
    expect(bounds(p)).toEqual([
      ['protected', 1, 21],
      ['light_use', 22, 35],
      ['strengthening', 36, 63],
    ]);
    // The day-35 rule extends a phase that no longer exists, so it is dropped rather than kept undecided.
    expect(p.progression).toEqual([]);
  });

  it('a rule whose phase an earlier rule skipped does nothing even when its condition is met', () => {
    const p = applyProgression(skipping, [glide('good', 21), glide('poor', 35)]);
    expect(bounds(p)).toEqual([
      ['protected', 1, 21],
      ['light_use', 22, 35],
      ['strengthening', 36, 63],
    ]);
  });

  it('without the skip the day-35 rule applies on its own', () => {
    const p = applyProgression(skipping, [glide('poor', 21), glide('poor', 35)]);
    expect(bounds(p)).toEqual([
      ['protected', 1, 28],
      ['splint_off', 29, 49],
      ['light_use', 50, 63],
      ['strengthening', 64, 91],
    ]);
  });
});
