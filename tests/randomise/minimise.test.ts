import { describe, it, expect } from 'vitest';
import seedrandom from 'seedrandom';
import { jStat } from 'jstat';
import { minimise, InvalidInputError } from '@/lib/randomise';

const ARMS = [
  { code: 'A', ratio: 1 },
  { code: 'B', ratio: 1 },
];
const FACTORS = [
  { name: 'site', weight: 1 },
  { name: 'sex', weight: 1 },
  { name: 'zone', weight: 1 },
];
const NEW_PARTICIPANT = { site: 'S1', sex: 'M', zone: 'Z2' };

/** Earlier participants on one arm whose marginal counts per factor are the given level lists. */
function cohort(arm: string, sites: [string, number][], sexes: [string, number][], zones: [string, number][]) {
  const expand = (xs: [string, number][]) => xs.flatMap(([level, n]) => Array<string>(n).fill(level));
  const [s, x, z] = [expand(sites), expand(sexes), expand(zones)];
  expect(s.length).toBe(x.length); // the three marginals must describe the same people
  expect(s.length).toBe(z.length);
  return s.map((site, i) => ({ arm, levels: { site, sex: x[i], zone: z[i] } }));
}

/** Rng stub returning the given values in turn, so a test decides each draw. */
function stub(...values: number[]) {
  let i = 0;
  return () => {
    if (i >= values.length) throw new Error('the stub ran out of values');
    return values[i++];
  };
}

// PS-1 (Pocock & Simon 1975, Biometrics 31:103, range measure; worked example derived in the check file):
// matching counts A / B: site S1 5 / 4, sex M 6 / 4, zone Z2 8 / 7.
const PS1_EXISTING = [
  ...cohort('A', [['S1', 5], ['S2', 5]], [['M', 6], ['F', 4]], [['Z2', 8], ['Z1', 2]]),
  ...cohort('B', [['S1', 4], ['S2', 6]], [['M', 4], ['F', 6]], [['Z2', 7], ['Z1', 3]]),
];

describe('minimise (Pocock–Simon, range measure)', () => {
  it('PS-1 (Pocock & Simon 1975, derived worked example): G_A = 7, G_B = 1, so B is the preferred arm', () => {
    const args = { arms: ARMS, factors: FACTORS, existing: PS1_EXISTING, participant: NEW_PARTICIPANT, pBest: 0.8 };
    const r = minimise({ ...args, rng: stub(0.5) });
    expect(r.imbalance).toEqual({ A: 7, B: 1 });
    expect(r.arm).toBe('B');
    // PS-1: with p = 0.8, B is taken for a draw below 0.8 and A for a draw at or above it.
    expect(minimise({ ...args, rng: stub(0.95) }).arm).toBe('A');
    expect(minimise({ ...args, rng: stub(0.7999) }).arm).toBe('B');
    expect(minimise({ ...args, rng: stub(0.8) }).arm).toBe('A');
  });

  it('PS-1: with p = 0.8 the preferred arm B is chosen about 80% of the time (chi-square goodness of fit, p > 0.001)', () => {
    const rng = seedrandom('ps1-share');
    const n = 4000;
    let b = 0;
    for (let i = 0; i < n; i += 1) {
      if (minimise({ arms: ARMS, factors: FACTORS, existing: PS1_EXISTING, participant: NEW_PARTICIPANT, pBest: 0.8, rng }).arm === 'B') b += 1;
    }
    const stat = (b - 0.8 * n) ** 2 / (0.8 * n) + (n - b - 0.2 * n) ** 2 / (0.2 * n);
    expect(1 - jStat.chisquare.cdf(stat, 1)).toBeGreaterThan(0.001);
  });

  it('PS-2 (derived from Pocock & Simon 1975): counts at the other levels of each factor do not change the result', () => {
    // The other levels as given in PS-2: site S2 3/4, S3 2/2; sex F 4/6; zone Z1 2/3.
    const ps2 = [
      ...cohort('A', [['S1', 5], ['S2', 3], ['S3', 2]], [['M', 6], ['F', 4]], [['Z2', 8], ['Z1', 2]]),
      ...cohort('B', [['S1', 4], ['S2', 4], ['S3', 2]], [['M', 4], ['F', 6]], [['Z2', 7], ['Z1', 3]]),
    ];
    // Adding participants who share none of the new participant's levels must change nothing either.
    const padded = [...ps2, ...Array.from({ length: 9 }, () => ({ arm: 'A', levels: { site: 'S3', sex: 'F', zone: 'Z1' } }))];
    for (const existing of [ps2, padded]) {
      const r = minimise({ arms: ARMS, factors: FACTORS, existing, participant: NEW_PARTICIPANT, pBest: 0.8, rng: stub(0.5) });
      expect(r).toEqual({ arm: 'B', imbalance: { A: 7, B: 1 } });
    }
  });

  it('breaks a tie at random with equal probability, whatever pBest is (Pocock & Simon 1975, step 4)', () => {
    const args = { arms: ARMS, factors: FACTORS, existing: [], participant: NEW_PARTICIPANT, pBest: 1 };
    expect(minimise({ ...args, rng: stub(0.2) })).toEqual({ arm: 'A', imbalance: { A: 3, B: 3 } });
    expect(minimise({ ...args, rng: stub(0.7) }).arm).toBe('B');
    const rng = seedrandom('ties');
    let a = 0;
    const n = 2000;
    for (let i = 0; i < n; i += 1) if (minimise({ ...args, rng }).arm === 'A') a += 1;
    const stat = ((a - n / 2) ** 2 / (n / 2)) * 2;
    expect(1 - jStat.chisquare.cdf(stat, 1)).toBeGreaterThan(0.001);
  });

  it('with three arms, picks among the tied best arms with pBest and among the rest otherwise', () => {
    const arms = [...ARMS, { code: 'C', ratio: 1 }];
    // One earlier participant on C at the same level: adding to A or B gives range 1, adding to C gives 2.
    const existing = [{ arm: 'C', levels: { site: 'S1' } }];
    const args = { arms, factors: [{ name: 'site', weight: 1 }], existing, participant: { site: 'S1' }, pBest: 0.8 };
    expect(minimise({ ...args, rng: stub(0.1) })).toEqual({ arm: 'A', imbalance: { A: 1, B: 1, C: 2 } });
    expect(minimise({ ...args, rng: stub(0.5) }).arm).toBe('B');
    expect(minimise({ ...args, rng: stub(0.9) }).arm).toBe('C');
  });

  it('divides counts by the arm ratio before taking the range at unequal ratios', () => {
    // 2:1 with 2 on A and 1 on B already in ratio: A → 3/2 vs 1 (range 0.5); B → 2/2 vs 2 (range 1).
    const arms = [{ code: 'A', ratio: 2 }, { code: 'B', ratio: 1 }];
    const existing = [
      { arm: 'A', levels: { site: 'S1' } },
      { arm: 'A', levels: { site: 'S1' } },
      { arm: 'B', levels: { site: 'S1' } },
    ];
    const r = minimise({ arms, factors: [{ name: 'site', weight: 1 }], existing, participant: { site: 'S1' }, pBest: 1, rng: stub(0.5) });
    expect(r).toEqual({ arm: 'A', imbalance: { A: 0.5, B: 1 } });
  });

  it('applies factor weights to the ranges', () => {
    const factors = [{ name: 'site', weight: 2 }, { name: 'sex', weight: 0.5 }, { name: 'zone', weight: 1 }];
    const r = minimise({ arms: ARMS, factors, existing: PS1_EXISTING, participant: NEW_PARTICIPANT, pBest: 0.8, rng: stub(0.5) });
    // PS-1 ranges: A 2, 3, 2; B 0, 1, 0.
    expect(r.imbalance).toEqual({ A: 2 * 2 + 0.5 * 3 + 2, B: 0.5 * 1 });
  });

  it('keeps the largest marginal imbalance smaller than simple randomisation does on a simulated cohort of 200', () => {
    const factors = [
      { name: 'site', weight: 1 },
      { name: 'fingers', weight: 1 },
      { name: 'sex', weight: 1 },
    ];
    const levelRng = seedrandom('cohort-levels');
    const pick = (xs: string[]) => xs[Math.floor(levelRng() * xs.length)];
    const people = Array.from({ length: 200 }, () => ({
      site: pick(['HHC', 'MLB', 'KVH', 'NPU']),
      fingers: pick(['1', '2+']),
      sex: pick(['F', 'M']),
    }));
    const worstMarginal = (allocated: { arm: string; levels: Record<string, string> }[]) => {
      const diff = new Map<string, number>();
      for (const p of allocated) {
        for (const f of factors) {
          const key = `${f.name}=${p.levels[f.name]}`;
          diff.set(key, (diff.get(key) ?? 0) + (p.arm === 'A' ? 1 : -1));
        }
      }
      return Math.max(...[...diff.values()].map(Math.abs));
    };

    const minRng = seedrandom('allocation');
    const minimised: { arm: string; levels: Record<string, string> }[] = [];
    for (const levels of people) {
      const { arm } = minimise({ arms: ARMS, factors, existing: minimised, participant: levels, pBest: 0.8, rng: minRng });
      minimised.push({ arm, levels });
    }
    const simpleRng = seedrandom('allocation');
    const simple = people.map((levels) => ({ arm: simpleRng() < 0.5 ? 'A' : 'B', levels }));

    expect(minimised).toHaveLength(200);
    expect(worstMarginal(minimised)).toBeLessThan(worstMarginal(simple));
  });

  it('rejects invalid input with a message naming the item', () => {
    const base = { arms: ARMS, factors: FACTORS, existing: PS1_EXISTING, participant: NEW_PARTICIPANT, pBest: 0.8, rng: stub(0.5) };
    expect(() => minimise({ ...base, pBest: 0 })).toThrow(InvalidInputError);
    expect(() => minimise({ ...base, pBest: 1.01 })).toThrow(InvalidInputError);
    expect(() => minimise({ ...base, pBest: Number.NaN })).toThrow(InvalidInputError);
    expect(() => minimise({ ...base, participant: { site: 'S1', sex: 'M' } })).toThrow(/level of factor "zone"/);
    expect(() => minimise({ ...base, existing: [{ arm: 'X', levels: NEW_PARTICIPANT }] })).toThrow(/arm "X"/);
    expect(() => minimise({ ...base, existing: [{ arm: 'A', levels: { site: 'S1' } }] })).toThrow(/earlier participant 1/);
    expect(() => minimise({ ...base, factors: [] })).toThrow(InvalidInputError);
    expect(() => minimise({ ...base, factors: [{ name: 'site', weight: -1 }] })).toThrow(/weight of factor "site"/);
    expect(() => minimise({ ...base, factors: [{ name: 'site', weight: 1 }, { name: 'site', weight: 1 }] })).toThrow(/more than once/);
    expect(() => minimise({ ...base, rng: () => 1 })).toThrow(/random number source returned 1/);
    expect(() => minimise({ ...base, arms: [{ code: 'A', ratio: 1 }] })).toThrow(InvalidInputError);
  });
});
