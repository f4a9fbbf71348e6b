import { describe, it, expect } from 'vitest';
import {
  totalActiveMotion,
  tamPercent,
  tamGrade,
  roundTo,
  ASSH_TAM_BANDS,
  NORMAL_TAM_DEGREES,
  type FingerMotion,
  type TamGrade,
} from '@/lib/scoring';
import { expectClose, expectInvalid } from './helpers';

// Sources for the check values in this file:
// - TAM-F1: TAM = (MCP + PIP + DIP active flexion) − (MCP + PIP + DIP extension deficits). American Society for
//   Surgery of the Hand (ASSH) definition, as summarised in HandLab Clinical Pearl No. 18 "Tendon Outcome
//   Assessments" (March 2012).
// - TAM-N1: 260° as the normal TAM. ASSH, as reported in HandLab Clinical Pearl No. 18 (2012).
// - TAM-F2: % of normal = TAM(injured) / TAM(contralateral) × 100, or / 260 × 100. HandLab Clinical Pearl No. 18 (2012).
// - TAM-N2: hyperextension counts as 0 deficit (common practice, no source).
// - ASSH-C1..C4: excellent = normal (100 %), good > 75 %, fair > 50 %, poor < 50 %. HandLab Clinical Pearl
//   No. 18 (2012), summarising ASSH. The boundaries (exactly 75 %, exactly 50 %, 75–<100 %) are undefined in the
//   source; the platform rule ≥ 100 / > 75 / > 50 / otherwise poor is common practice, no source.
// - TAM-E1: worked example derived from TAM-F1 and the ASSH grades.

const tamE1Injured: FingerMotion = {
  mcpFlexion: 85, pipFlexion: 100, dipFlexion: 60,
  mcpExtensionDeficit: 0, pipExtensionDeficit: 15, dipExtensionDeficit: 10,
};
const tamE1Contralateral: FingerMotion = {
  mcpFlexion: 90, pipFlexion: 105, dipFlexion: 70,
  mcpExtensionDeficit: 0, pipExtensionDeficit: 0, dipExtensionDeficit: 0,
};

describe('totalActiveMotion', () => {
  it('TAM-F1 / TAM-E1: injured finger 85/100/60 with deficits 0/15/10 has TAM 220° [ASSH via HandLab Clinical Pearl No. 18, 2012]', () => {
    expect(totalActiveMotion(tamE1Injured)).toBe(220);
  });

  it('TAM-F1 / TAM-E1: contralateral finger 90/105/70 with no deficits has TAM 265° [ASSH via HandLab Clinical Pearl No. 18, 2012]', () => {
    expect(totalActiveMotion(tamE1Contralateral)).toBe(265);
  });

  it('TAM-F1: deficits are subtracted from flexion, not flexion from deficits [ASSH via HandLab Clinical Pearl No. 18, 2012]', () => {
    // The reversed order (deficits − flexion) would give −220 for TAM-E1.
    expect(totalActiveMotion(tamE1Injured)).toBeGreaterThan(0);
    expect(totalActiveMotion({ ...tamE1Injured, pipExtensionDeficit: 25 })).toBe(210);
  });

  it('TAM-N2: hyperextension (negative deficit) counts as 0 and is not added to flexion [common practice, no source]', () => {
    expect(totalActiveMotion({ ...tamE1Contralateral, mcpExtensionDeficit: -20 })).toBe(265);
    expect(totalActiveMotion({ ...tamE1Injured, mcpExtensionDeficit: -30 })).toBe(220);
  });

  it('TAM-F1: a finger with no motion (deficit equal to flexion at every joint) has TAM 0° [ASSH via HandLab Clinical Pearl No. 18, 2012]', () => {
    expect(totalActiveMotion({
      mcpFlexion: 40, pipFlexion: 45, dipFlexion: 20,
      mcpExtensionDeficit: 40, pipExtensionDeficit: 45, dipExtensionDeficit: 20,
    })).toBe(0);
  });

  it('accepts fractional degrees and the per-joint plausibility limit of 120° (common practice, no source)', () => {
    expect(totalActiveMotion({
      mcpFlexion: 120, pipFlexion: 0, dipFlexion: 0.5,
      mcpExtensionDeficit: 120, pipExtensionDeficit: 0, dipExtensionDeficit: -120,
    })).toBe(0.5);
  });
});

describe('tamPercent', () => {
  it('TAM-F2 / TAM-E1: 220° against a contralateral 265° is 83.02 % [HandLab Clinical Pearl No. 18, 2012]', () => {
    const percent = tamPercent(220, 265);
    expectClose(percent, (220 / 265) * 100);
    expect(roundTo(percent, 2)).toBe(83.02);
  });

  it('TAM-N1 / TAM-E1: 220° with no contralateral finger (null) is 84.62 % of the 260° normal [ASSH via HandLab Clinical Pearl No. 18, 2012]', () => {
    expect(NORMAL_TAM_DEGREES).toBe(260);
    const percent = tamPercent(220, null);
    expectClose(percent, (220 / 260) * 100);
    expect(roundTo(percent, 2)).toBe(84.62);
  });

  it('TAM-N1: a contralateral TAM of 0° is not usable and falls back to the 260° normal [ASSH via HandLab Clinical Pearl No. 18, 2012]', () => {
    expectClose(tamPercent(220, 0), (220 / 260) * 100);
    expect(tamPercent(260, 0)).toBe(100);
  });

  it('TAM-N1: a finger at the 260° normal is exactly 100 % [ASSH via HandLab Clinical Pearl No. 18, 2012]', () => {
    expect(tamPercent(260, null)).toBe(100);
  });

  it('TAM-F2: exact ratios land exactly on the grade boundaries (195/260 = 75 %, 130/260 = 50 %) [HandLab Clinical Pearl No. 18, 2012]', () => {
    expect(tamPercent(195, null)).toBe(75);
    expect(tamPercent(130, null)).toBe(50);
    expect(tamPercent(198, 264)).toBe(75);
  });

  it('TAM-F2: an injured finger better than the contralateral one exceeds 100 % [HandLab Clinical Pearl No. 18, 2012]', () => {
    expectClose(tamPercent(270, 250), 108);
  });
});

describe('tamGrade with the default ASSH bands', () => {
  it('TAM-E1: 83.02 % (contralateral) and 84.62 % (260° normal) are both good [ASSH-C2, HandLab Clinical Pearl No. 18, 2012]', () => {
    const injured = totalActiveMotion(tamE1Injured);
    const contralateral = totalActiveMotion(tamE1Contralateral);
    expect(tamGrade(tamPercent(injured, contralateral))).toBe('good');
    expect(tamGrade(tamPercent(injured, null))).toBe('good');
  });

  // ASSH-C1..C4 (HandLab Clinical Pearl No. 18, 2012, summarising ASSH) for values inside the bands, and the
  // platform's boundary rule (common practice, no source) for the values the source leaves undefined.
  const cases: ReadonlyArray<[id: string, percent: number, grade: TamGrade]> = [
    ['ASSH-C1: equal to normal', 100, 'excellent'],
    ['ASSH-C1: above normal', 112.5, 'excellent'],
    ['ASSH-C2: > 75 %', 90, 'good'],
    ['ASSH-C2: > 75 %', 76, 'good'],
    ['ASSH-C3: > 50 %', 60, 'fair'],
    ['ASSH-C3: > 50 %', 51, 'fair'],
    ['ASSH-C4: < 50 %', 49, 'poor'],
    ['ASSH-C4: < 50 %', 0, 'poor'],
    ['boundary rule (common practice, no source): just under 100 % is good', 99.999, 'good'],
    ['boundary rule (common practice, no source): just over 75 % is good', 75.0001, 'good'],
    ['boundary rule (common practice, no source): exactly 75 % is fair', 75, 'fair'],
    ['boundary rule (common practice, no source): just over 50 % is fair', 50.0001, 'fair'],
    ['boundary rule (common practice, no source): exactly 50 % is poor', 50, 'poor'],
  ];
  it.each(cases)('%s: %s percent → %s', (_id, percent, grade) => {
    expect(tamGrade(percent)).toBe(grade);
  });

  it('the default bands are 100 / 75 / 50 and cannot be altered at run time [ASSH-C1..C3, HandLab Clinical Pearl No. 18, 2012]', () => {
    expect(ASSH_TAM_BANDS).toEqual({ excellent: 100, good: 75, fair: 50 });
    expect(Object.isFrozen(ASSH_TAM_BANDS)).toBe(true);
  });

  it('passing the default bands explicitly gives the same grades', () => {
    expect(tamGrade(75, ASSH_TAM_BANDS)).toBe('fair');
    expect(tamGrade(100, { ...ASSH_TAM_BANDS })).toBe('excellent');
  });
});

describe('tamGrade with study-configured bands', () => {
  // An invented study scheme to show that the same boundary rule applies to configured thresholds:
  // ≥ excellent, > good, > fair, otherwise poor.
  const studyBands = { excellent: 90, good: 70, fair: 30 };
  const cases: ReadonlyArray<[percent: number, grade: TamGrade]> = [
    [95, 'excellent'],
    [90, 'excellent'],
    [89.99, 'good'],
    [70.01, 'good'],
    [70, 'fair'],
    [30.5, 'fair'],
    [30, 'poor'],
    [10, 'poor'],
  ];
  it.each(cases)('%s percent → %s', (percent, grade) => {
    expect(tamGrade(percent, studyBands)).toBe(grade);
  });

  it('a configured fair threshold of 0 grades only 0 % as poor', () => {
    expect(tamGrade(0, { excellent: 100, good: 50, fair: 0 })).toBe('poor');
    expect(tamGrade(0.1, { excellent: 100, good: 50, fair: 0 })).toBe('fair');
  });

  const badBands: ReadonlyArray<[label: string, bands: { excellent: number; good: number; fair: number }, message: RegExp]> = [
    ['ascending', { excellent: 50, good: 75, fair: 100 }, /must descend/],
    ['good equal to excellent', { excellent: 75, good: 75, fair: 50 }, /must descend/],
    ['fair equal to good', { excellent: 100, good: 50, fair: 50 }, /must descend/],
    ['fair above good', { excellent: 100, good: 50, fair: 60 }, /must descend/],
    ['negative fair', { excellent: 100, good: 50, fair: -10 }, /fair threshold .* must not be negative/],
    ['NaN excellent', { excellent: Number.NaN, good: 75, fair: 50 }, /excellent threshold/],
    ['infinite good', { excellent: 100, good: Number.POSITIVE_INFINITY, fair: 50 }, /good threshold/],
    ['NaN fair', { excellent: 100, good: 75, fair: Number.NaN }, /fair threshold/],
  ];
  it.each(badBands)('rejects bands that are %s', (_label, bands, message) => {
    expectInvalid(() => tamGrade(80, bands), message);
  });

  it('rejects bands that are not an object', () => {
    expectInvalid(() => tamGrade(80, null as unknown as { excellent: number; good: number; fair: number }), /grade bands must be an object/);
  });
});
