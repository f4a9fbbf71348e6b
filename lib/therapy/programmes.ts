// Example rehabilitation programmes after flexor tendon repair, and the two arms of the demo study
// TEMPO-FT. Every number here (days, splint angles, wear hours, repetitions, frequencies) is a
// common-practice parameter: plausible, not taken from a specific source, and never a prescription.
// A real study writes its own protocol values.
//
// Day 0 is the day of repair; "after four weeks" is day 29 (days 1–28 are weeks 1–4).
// Wrist angles: negative = flexion, positive = extension.

import type { Phase, Prescription, Programme, Splint } from './index';

// Fixtures are shared by every caller, so they are frozen: a caller that wants a variant copies it.
function deepFreeze<T>(value: T): T {
  if (typeof value === 'object' && value !== null) {
    for (const v of Object.values(value)) deepFreeze(v);
    Object.freeze(value);
  }
  return value;
}

// Dorsal blocking splint, wrist in 20° flexion, MCP joints in 50° flexion, IP joints free to extend to
// the hood (common practice).
function dorsalBlocking(hoursPerDay: number, wristAngleDeg = -20, mcpFlexionDeg = 50): Splint {
  return { type: 'dorsal_blocking', wristAngleDeg, mcpFlexionDeg, hoursPerDay };
}

const NO_SPLINT: Splint = { type: 'none', wristAngleDeg: 0, mcpFlexionDeg: 0, hoursPerDay: 0 };

function every(hours: number, ...items: [Prescription['kind'], number, number?][]): Prescription[] {
  return items.map(([kind, repetitions, holdSeconds]) => ({
    kind,
    repetitions,
    ...(holdSeconds === undefined ? {} : { holdSeconds }),
    frequency: { everyHours: hours },
  }));
}

function daily(sessionsPerDay: number, ...items: [Prescription['kind'], number, number?][]): Prescription[] {
  return items.map(([kind, repetitions, holdSeconds]) => ({
    kind,
    repetitions,
    ...(holdSeconds === undefined ? {} : { holdSeconds }),
    frequency: { sessionsPerDay },
  }));
}

function supervised(items: Prescription[]): Prescription[] {
  return items.map((x) => ({ ...x, supervisedOnly: true }));
}

function phase(key: string, label: string, fromDay: number, toDay: number | null, splint: Splint, exercises: Prescription[], exerciseSplint?: Splint): Phase {
  return { key, label, fromDay, toDay, splint, ...(exerciseSplint ? { exerciseSplint } : {}), exercises };
}

/**
 * Four-hourly routine in a dorsal blocking splint (wrist flexed): passive flexion, light active flexion
 * and active extension. The splint comes off after four weeks, or after six when tendon glide is poor
 * at the four-week review. Common-practice parameters.
 */
export const fourHourlyDorsalBlock: Programme = deepFreeze({
  key: 'four_hourly_dorsal_block',
  label: 'Four-hourly exercises in a dorsal blocking splint',
  description:
    'Every four hours while awake, inside a dorsal blocking splint with the wrist flexed: passive flexion, light active flexion and active extension. ' +
    'The splint comes off at four weeks, or at six weeks when tendon glide is poor at the four-week review. Strengthening only after eight weeks. ' +
    'Common-practice parameters, not a prescription.',
  phases: [
    phase('protected', 'Exercises in the dorsal blocking splint', 1, 28, dorsalBlocking(24), every(4, ['passive_flexion', 10], ['active_flexion', 10], ['active_extension', 10])),
    phase('splint_off', 'Splint off: full active motion', 29, 42, NO_SPLINT, every(4, ['passive_flexion', 10], ['active_flexion', 10], ['active_extension', 10], ['tendon_gliding', 10])),
    phase('light_use', 'Light functional use', 43, 56, NO_SPLINT, every(4, ['active_flexion', 10], ['tendon_gliding', 10], ['tenodesis', 10])),
    phase('strengthening', 'Graded strengthening', 57, 84, NO_SPLINT, daily(3, ['resisted', 10], ['active_flexion', 10], ['tendon_gliding', 10])),
  ],
  progression: [
    {
      id: 'glide_at_four_weeks',
      atDay: 28,
      condition: { measure: 'tendon_glide', is: 'poor' },
      effect: { extendPhase: 'protected', byDays: 14 },
      note: 'At four weeks, if tendon glide is poor, keep the splint and the protected exercises two more weeks (to six weeks).',
    },
  ],
});

/**
 * Hourly passive motion in the dorsal blocking splint, followed in the same session by place-and-hold
 * in a hinged wrist exercise splint; active flexion after about four weeks, resisted exercise after
 * seven weeks. Common-practice parameters.
 */
export const hourlyPassiveThenPlaceHold: Programme = deepFreeze({
  key: 'hourly_passive_then_place_hold',
  label: 'Hourly passive motion, then place-and-hold in a hinged wrist splint',
  description:
    'Every hour while awake: passive flexion in the dorsal blocking splint, then place-and-hold (wrist extended, fingers placed in flexion and held) in a hinged wrist exercise splint. ' +
    'Active flexion after about four weeks, splint off at six weeks, resisted exercise after seven weeks. Common-practice parameters, not a prescription.',
  phases: [
    phase(
      'passive_place_hold',
      'Passive motion and place-and-hold',
      1,
      28,
      dorsalBlocking(22),
      every(1, ['passive_flexion', 15], ['place_and_hold', 25, 5]),
      // Hinged splint for the exercise sessions: full wrist flexion, extension stopped at 30°.
      { type: 'hinged_wrist', wristAngleDeg: 30, mcpFlexionDeg: 60, hoursPerDay: 2 },
    ),
    phase('active_flexion', 'Active flexion added', 29, 42, dorsalBlocking(22), every(2, ['place_and_hold', 25, 5], ['active_flexion', 25], ['active_extension', 25], ['tenodesis', 25])),
    phase('splint_off', 'Splint off: active motion and tendon gliding', 43, 49, NO_SPLINT, every(2, ['active_flexion', 25], ['tendon_gliding', 10], ['tenodesis', 25])),
    phase('resisted', 'Resisted exercise', 50, 84, NO_SPLINT, daily(3, ['resisted', 10], ['active_flexion', 25], ['tendon_gliding', 10])),
  ],
  progression: [],
});

/**
 * Therapist-led minimal active tension: for the first three weeks every active exercise is done only
 * with the therapist, who sets its load from the strength of the repair and the day's oedema; passive
 * flexion at home. Common-practice parameters.
 */
export const minimalActiveTension: Programme = deepFreeze({
  key: 'minimal_active_tension',
  label: 'Therapist-led minimal active tension',
  description:
    'For the first three weeks the active exercises (place-and-hold with a light hold, short-arc active flexion, active extension in the splint) are done only with the therapist, ' +
    'who adjusts the load to the strength of the repair and to oedema and resistance to glide on the day; at home only passive flexion, four-hourly. ' +
    'From week 4 the active exercises are done at home; splint off at six weeks, resisted exercise after eight weeks. Common-practice parameters, not a prescription.',
  phases: [
    phase('therapist_led', 'Active motion with the therapist only', 1, 21, dorsalBlocking(24), [
      ...every(4, ['passive_flexion', 10]),
      ...supervised(daily(1, ['place_and_hold', 10, 5], ['active_flexion', 5], ['active_extension', 10])),
    ]),
    phase('home_active', 'Active exercises at home in the splint', 22, 42, dorsalBlocking(22), every(4, ['passive_flexion', 10], ['place_and_hold', 10, 5], ['active_flexion', 10], ['active_extension', 10], ['tenodesis', 10])),
    phase('splint_off', 'Splint off: active motion and tendon gliding', 43, 56, NO_SPLINT, every(4, ['active_flexion', 10], ['active_extension', 10], ['tendon_gliding', 10], ['tenodesis', 10])),
    phase('strengthening', 'Graded strengthening', 57, 84, NO_SPLINT, daily(3, ['resisted', 10], ['active_flexion', 10], ['tendon_gliding', 10])),
  ],
  progression: [],
});

/**
 * Elastic traction through a palmar pulley: the band flexes the finger passively, the patient extends
 * actively, and a light active contraction held a few seconds is done with the therapist during the
 * first four weeks; the splint comes off after eight weeks. Common-practice parameters.
 */
export const elasticTractionPalmarPulley: Programme = deepFreeze({
  key: 'elastic_traction_palmar_pulley',
  label: 'Elastic traction through a palmar pulley',
  description:
    'Dorsal blocking splint with an elastic band running from the fingernail through a palmar pulley: hourly active extension against the band, which returns the finger to flexion passively. ' +
    'During the first four weeks a light active contraction, held a few seconds, is done with the therapist only. Band off at four weeks, splint off at eight weeks, resisted exercise after ten weeks. ' +
    'Common-practice parameters, not a prescription.',
  phases: [
    phase('elastic_traction', 'Elastic traction in the splint', 1, 28, { type: 'dorsal_blocking_elastic_traction', wristAngleDeg: -30, mcpFlexionDeg: 60, hoursPerDay: 24 }, [
      ...every(1, ['passive_flexion', 10], ['active_extension', 10]),
      // The light active contraction held a few seconds is recorded with the place-and-hold code.
      ...supervised(daily(1, ['place_and_hold', 5, 3])),
    ]),
    phase('active_in_splint', 'Band off: active motion in the splint', 29, 56, dorsalBlocking(22, -20, 60), every(2, ['passive_flexion', 10], ['active_extension', 10], ['place_and_hold', 10, 5], ['active_flexion', 10], ['tendon_gliding', 10])),
    phase('splint_off', 'Splint off: active motion and tendon gliding', 57, 70, NO_SPLINT, every(4, ['active_flexion', 10], ['tendon_gliding', 10], ['tenodesis', 10], ['passive_flexion', 10])),
    phase('strengthening', 'Graded strengthening', 71, 84, NO_SPLINT, daily(3, ['resisted', 10], ['active_flexion', 10], ['tendon_gliding', 10])),
  ],
  progression: [],
});

/**
 * TEMPO-FT arm EPM, early passive motion: passive flexion and active extension in a dorsal blocking
 * splint for four weeks, active motion after that, resisted exercise after ten weeks; runs to week 12.
 * Common-practice parameters.
 */
export const EPM: Programme = deepFreeze({
  key: 'tempo_ft_epm',
  arm: 'EPM',
  label: 'Early passive motion',
  description:
    'Passive flexion and active extension in a dorsal blocking splint, six sessions a day, for four weeks; active motion in the splint in weeks 5–6; ' +
    'splint off at six weeks; resisted exercise after ten weeks; to week 12. Common-practice parameters, not a prescription.',
  phases: [
    phase('passive_in_splint', 'Passive flexion and active extension in the splint', 1, 28, dorsalBlocking(24), daily(6, ['passive_flexion', 10], ['active_extension', 10])),
    phase('active_in_splint', 'Active motion in the splint', 29, 42, dorsalBlocking(22), daily(6, ['passive_flexion', 10], ['active_extension', 10], ['place_and_hold', 10, 5], ['active_flexion', 10], ['tenodesis', 10])),
    phase('splint_off', 'Splint off: active motion and tendon gliding', 43, 70, NO_SPLINT, daily(6, ['passive_flexion', 10], ['active_extension', 10], ['active_flexion', 10], ['tendon_gliding', 10], ['tenodesis', 10])),
    phase('strengthening', 'Graded strengthening', 71, 84, NO_SPLINT, [...daily(3, ['resisted', 10]), ...daily(4, ['active_flexion', 10], ['tendon_gliding', 10])]),
  ],
  progression: [],
});

/**
 * TEMPO-FT arm EAM, early active motion: rest in the splint for two days, then place-and-hold and
 * light active flexion in a dorsal blocking splint from day 3, splint off at six weeks, resisted
 * exercise after eight weeks; runs to week 12. Common-practice parameters.
 */
export const EAM: Programme = deepFreeze({
  key: 'tempo_ft_eam',
  arm: 'EAM',
  label: 'Early active motion',
  description:
    'Two days of rest in a dorsal blocking splint, then from day 3 place-and-hold and light active flexion in the splint, six sessions a day; ' +
    'full active motion in weeks 5–6; splint off at six weeks; resisted exercise after eight weeks; to week 12. Common-practice parameters, not a prescription.',
  phases: [
    phase('post_op_rest', 'Rest in the splint after surgery', 1, 2, dorsalBlocking(24), []),
    phase('early_active', 'Place-and-hold and light active flexion in the splint', 3, 28, dorsalBlocking(24), daily(6, ['passive_flexion', 10], ['place_and_hold', 10, 5], ['active_flexion', 10], ['active_extension', 10])),
    phase('active_in_splint', 'Full active motion in the splint', 29, 42, dorsalBlocking(22), daily(6, ['passive_flexion', 10], ['place_and_hold', 10, 5], ['active_flexion', 10], ['active_extension', 10], ['tenodesis', 10], ['tendon_gliding', 10])),
    phase('splint_off', 'Splint off: active motion and tendon gliding', 43, 56, NO_SPLINT, daily(6, ['active_flexion', 10], ['active_extension', 10], ['tendon_gliding', 10], ['tenodesis', 10], ['passive_flexion', 10])),
    phase('strengthening', 'Graded strengthening', 57, 84, NO_SPLINT, [...daily(3, ['resisted', 10]), ...daily(4, ['active_flexion', 10], ['tendon_gliding', 10])]),
  ],
  progression: [],
});

/** All example programmes and the demo-study arms, keyed by programme key. */
export const PROGRAMMES: Record<string, Programme> = deepFreeze({
  [fourHourlyDorsalBlock.key]: fourHourlyDorsalBlock,
  [hourlyPassiveThenPlaceHold.key]: hourlyPassiveThenPlaceHold,
  [minimalActiveTension.key]: minimalActiveTension,
  [elasticTractionPalmarPulley.key]: elasticTractionPalmarPulley,
  [EPM.key]: EPM,
  [EAM.key]: EAM,
});
