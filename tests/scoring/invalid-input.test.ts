import { describe, it } from 'vitest';
import {
  totalActiveMotion,
  tamPercent,
  tamGrade,
  quickDash,
  dash,
  dashModule,
  gripRatio,
  type FingerMotion,
  type ItemResponses,
} from '@/lib/scoring';
import { expectInvalid } from './helpers';

// Every invalid input must throw InvalidInputError (code 'invalid_input') with a message naming the offending
// item, so the API layer can return HTTP 400 with something a person can act on.

const validFinger: FingerMotion = {
  mcpFlexion: 85, pipFlexion: 100, dipFlexion: 60,
  mcpExtensionDeficit: 0, pipExtensionDeficit: 15, dipExtensionDeficit: 10,
};

describe('totalActiveMotion rejects', () => {
  const fields: ReadonlyArray<[key: keyof FingerMotion, label: string]> = [
    ['mcpFlexion', 'MCP flexion'],
    ['pipFlexion', 'PIP flexion'],
    ['dipFlexion', 'DIP flexion'],
    ['mcpExtensionDeficit', 'MCP extension deficit'],
    ['pipExtensionDeficit', 'PIP extension deficit'],
    ['dipExtensionDeficit', 'DIP extension deficit'],
  ];
  const notFinite: ReadonlyArray<[name: string, value: unknown]> = [
    ['NaN', Number.NaN],
    ['Infinity', Number.POSITIVE_INFINITY],
    ['-Infinity', Number.NEGATIVE_INFINITY],
    ['a numeric string', '45'],
    ['null', null],
    ['a missing value', undefined],
  ];
  const nonFiniteCases = fields.flatMap(([key, label]) =>
    notFinite.map(([name, value]) => [key, label, name, value] as const),
  );
  it.each(nonFiniteCases)('%s given %s (%s)', (key, label, _name, value) => {
    const finger = { ...validFinger, [key]: value } as unknown as FingerMotion;
    expectInvalid(() => totalActiveMotion(finger), new RegExp(`^${label} must be a finite number in degrees`));
  });

  const negativeFlexion: ReadonlyArray<[key: keyof FingerMotion, value: number, label: string]> = [
    ['mcpFlexion', -1, 'MCP flexion'],
    ['pipFlexion', -0.5, 'PIP flexion'],
    ['dipFlexion', -90, 'DIP flexion'],
  ];
  it.each(negativeFlexion)('negative degrees: %s = %d', (key, value, label) => {
    expectInvalid(() => totalActiveMotion({ ...validFinger, [key]: value }), new RegExp(`^${label} must not be negative`));
  });

  // Plausibility limits are common practice, no source.
  const outOfRange: ReadonlyArray<[key: keyof FingerMotion, value: number, message: RegExp]> = [
    ['mcpFlexion', 121, /^MCP flexion of 121° is above the plausible maximum of 120°/],
    ['pipFlexion', 180, /^PIP flexion of 180° is above the plausible maximum/],
    ['dipFlexion', 360, /^DIP flexion of 360° is above the plausible maximum/],
    ['mcpExtensionDeficit', 121, /^MCP extension deficit of 121° is outside the plausible range/],
    ['pipExtensionDeficit', -121, /^PIP extension deficit of -121° is outside the plausible range/],
    ['dipExtensionDeficit', 200, /^DIP extension deficit of 200° is outside the plausible range/],
  ];
  it.each(outOfRange)('implausible degrees: %s = %d', (key, value, message) => {
    expectInvalid(() => totalActiveMotion({ ...validFinger, [key]: value }), message);
  });

  const deficitAboveFlexion: ReadonlyArray<[patch: Partial<FingerMotion>, message: RegExp]> = [
    [{ mcpFlexion: 10, mcpExtensionDeficit: 20 }, /^MCP extension deficit \(20°\) is larger than MCP flexion \(10°\)/],
    [{ pipFlexion: 30, pipExtensionDeficit: 40 }, /^PIP extension deficit \(40°\) is larger than PIP flexion \(30°\)/],
    [{ dipFlexion: 0, dipExtensionDeficit: 5 }, /^DIP extension deficit \(5°\) is larger than DIP flexion \(0°\)/],
  ];
  it.each(deficitAboveFlexion)('an extension deficit larger than the flexion of the same joint: %o', (patch, message) => {
    expectInvalid(() => totalActiveMotion({ ...validFinger, ...patch }), message);
  });

  it('something that is not an object', () => {
    expectInvalid(() => totalActiveMotion(null as unknown as FingerMotion), /Finger goniometry must be given as an object/);
  });
});

describe('tamPercent rejects', () => {
  const cases: ReadonlyArray<[label: string, injured: number, contralateral: number | null, message: RegExp]> = [
    ['negative injured TAM', -1, 265, /^Injured-finger TAM must be between 0° and 360°/],
    ['NaN injured TAM', Number.NaN, 265, /^Injured-finger TAM must be a finite number/],
    ['infinite injured TAM', Number.POSITIVE_INFINITY, null, /^Injured-finger TAM must be a finite number/],
    ['implausible injured TAM (common practice, no source)', 361, 265, /^Injured-finger TAM must be between/],
    ['negative contralateral TAM', 220, -265, /^Contralateral-finger TAM must be between 0° and 360°/],
    ['NaN contralateral TAM', 220, Number.NaN, /^Contralateral-finger TAM must be a finite number/],
    ['infinite contralateral TAM', 220, Number.POSITIVE_INFINITY, /^Contralateral-finger TAM must be a finite number/],
    ['implausible contralateral TAM (common practice, no source)', 220, 400, /^Contralateral-finger TAM must be between/],
  ];
  it.each(cases)('%s', (_label, injured, contralateral, message) => {
    expectInvalid(() => tamPercent(injured, contralateral), message);
  });

  it('a missing contralateral value given as undefined rather than null', () => {
    expectInvalid(() => tamPercent(220, undefined as unknown as null), /^Contralateral-finger TAM must be a finite number/);
  });
});

describe('tamGrade rejects', () => {
  const cases: ReadonlyArray<[label: string, percent: number, message: RegExp]> = [
    ['a negative percentage', -0.1, /^TAM percentage must not be negative/],
    ['NaN', Number.NaN, /^TAM percentage must be a finite number/],
    ['Infinity', Number.POSITIVE_INFINITY, /^TAM percentage must be a finite number/],
  ];
  it.each(cases)('%s', (_label, percent, message) => {
    expectInvalid(() => tamGrade(percent), message);
  });
});

describe('questionnaire scoring rejects', () => {
  type Scorer = (responses: ItemResponses) => number | null;
  const instruments: ReadonlyArray<[name: string, score: Scorer, items: number]> = [
    ['QuickDASH', quickDash, 11],
    ['DASH', dash, 30],
    ['DASH optional module', dashModule, 4],
  ];

  // Codes 0 and 6 are outside the 1–5 scale (0 also catches a 0–4 coding), 2.5 is not a whole code.
  const badCodes: ReadonlyArray<[name: string, code: unknown]> = [
    ['code 0', 0],
    ['code 6', 6],
    ['code 2.5', 2.5],
    ['code −1', -1],
    ['NaN', Number.NaN],
    ['Infinity', Number.POSITIVE_INFINITY],
    ['a numeric string', '3'],
    ['undefined instead of null', undefined],
  ];
  const codeCases = instruments.flatMap(([name, score, items]) =>
    badCodes.flatMap(([codeName, code]) =>
      // Put the bad code at the first and at the last item so the item number in the message is checked.
      [1, items].map((position) => [name, codeName, position, score, items, code] as const),
    ),
  );
  it.each(codeCases)('%s given %s at item %d', (name, _codeName, position, score, items, code) => {
    const responses: unknown[] = Array(items).fill(3);
    responses[position - 1] = code;
    expectInvalid(
      () => score(responses as ItemResponses),
      new RegExp(`^${name} item ${position} must be a whole number from 1 to 5`),
    );
  });

  it.each(instruments)('%s given a list with a hole', (name, score, items) => {
    const responses: (number | null)[] = Array(items).fill(3);
    delete responses[1];
    expectInvalid(() => score(responses), new RegExp(`^${name} item 2 must be a whole number from 1 to 5`));
  });

  const lengthCases = instruments.flatMap(([name, score, items]) =>
    [0, items - 1, items + 1].map((length) => [name, length, score, items] as const),
  );
  it.each(lengthCases)('%s given %d items', (name, length, score, items) => {
    expectInvalid(
      () => score(Array(length).fill(3)),
      new RegExp(`^${name} needs exactly ${items} items \\(got ${length}\\)`),
    );
  });

  it.each(instruments)('%s given something that is not a list', (name, score) => {
    expectInvalid(() => score('3,3,3' as unknown as ItemResponses), new RegExp(`^${name} responses must be a list`));
  });

  it('an invalid code even when too many items are missing to score', () => {
    // Validation comes before the missing-item rule, so a bad code is never hidden behind a null score.
    expectInvalid(() => quickDash([null, null, 0, 3, 3, 3, 3, 3, 3, 3, 3]), /^QuickDASH item 3 must be a whole number/);
  });
});

describe('gripRatio rejects', () => {
  const cases: ReadonlyArray<[label: string, affected: unknown, unaffected: unknown, message: RegExp]> = [
    ['no affected trials', [], [40], /^Grip strength of the affected hand needs at least one trial/],
    ['no unaffected trials', [20], [], /^Grip strength of the unaffected hand needs at least one trial/],
    ['a negative affected trial', [20, -1, 22], [40], /^Grip trial 2 of the affected hand must not be negative/],
    ['a negative unaffected trial', [20], [40, 41, -0.5], /^Grip trial 3 of the unaffected hand must not be negative/],
    ['a NaN trial', [Number.NaN], [40], /^Grip trial 1 of the affected hand must be a finite number in kilograms/],
    ['an infinite trial', [20], [Number.POSITIVE_INFINITY], /^Grip trial 1 of the unaffected hand must be a finite number/],
    ['a numeric string trial', [20, '21'], [40], /^Grip trial 2 of the affected hand must be a finite number/],
    ['an unaffected mean of 0 kg', [0], [0, 0, 0], /^Grip strength of the unaffected hand must be above 0 kg/],
    ['trials not given as a list', 20, [40], /^Grip strength of the affected hand needs at least one trial/],
  ];
  it.each(cases)('%s', (_label, affected, unaffected, message) => {
    expectInvalid(() => gripRatio(affected as number[], unaffected as number[]), message);
  });
});
