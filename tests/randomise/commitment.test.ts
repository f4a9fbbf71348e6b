import { describe, it, expect } from 'vitest';
import {
  ALGORITHM_VERSION,
  generateSchedule,
  permutedBlocks,
  scheduleCommitment,
  stratumKey,
  stratumSeed,
  verifyCommitment,
  InvalidInputError,
} from '@/lib/randomise';

const ARMS = [
  { code: 'EPM', ratio: 1 },
  { code: 'EAM', ratio: 1 },
];
const SITES = ['HHC', 'MLB', 'KVH', 'NPU'];
const STRATA = SITES.flatMap((site) => ['1', '2+'].map((fingers) => stratumKey({ site, fingers }, ['site', 'fingers'])));
const STUDY_SEED = 'tempo-ft-demo-seed';

function schedule() {
  return generateSchedule({ studySeed: STUDY_SEED, strata: STRATA, arms: ARMS, blockSizes: [2, 4, 6], perStratum: 40 });
}

describe('stratumKey and stratumSeed', () => {
  it('builds a canonical key in the given factor order, whatever order the levels object has', () => {
    expect(stratumKey({ fingers: '1', site: 'HHC' }, ['site', 'fingers'])).toBe('site=HHC|fingers=1');
    expect(stratumKey({ site: 'HHC', fingers: '2+', extra: 'x' }, ['site', 'fingers'])).toBe('site=HHC|fingers=2+');
    expect(() => stratumKey({ site: 'HHC' }, ['site', 'fingers'])).toThrow(/"fingers"/);
    expect(() => stratumKey({ site: 'H|C', fingers: '1' }, ['site', 'fingers'])).toThrow(InvalidInputError);
    expect(() => stratumKey({ site: 'HHC' }, ['site', 'site'])).toThrow(/more than once/);
  });

  it('derives a 64-hex seed per stratum that differs between strata and studies', () => {
    const a = stratumSeed(STUDY_SEED, 'site=HHC|fingers=1');
    expect(a).toMatch(/^[0-9a-f]{64}$/);
    expect(stratumSeed(STUDY_SEED, 'site=HHC|fingers=1')).toBe(a);
    expect(stratumSeed(STUDY_SEED, 'site=HHC|fingers=2+')).not.toBe(a);
    expect(stratumSeed('another-study', 'site=HHC|fingers=1')).not.toBe(a);
    // The separator keeps a shifted boundary between seed and key from colliding.
    expect(stratumSeed('ab', 'c')).not.toBe(stratumSeed('a', 'bc'));
  });
});

describe('generateSchedule', () => {
  it('randomises strata independently, each as permutedBlocks with its own stratum seed (PB-4, common practice)', () => {
    const s = schedule();
    expect(s).toHaveLength(STRATA.length * 40);
    for (const stratum of STRATA) {
      const rows = s.filter((e) => e.stratum === stratum);
      expect(rows.map((e) => e.slot)).toEqual(Array.from({ length: 40 }, (_, i) => i + 1));
      const expected = permutedBlocks({ seed: stratumSeed(STUDY_SEED, stratum), arms: ARMS, blockSizes: [2, 4, 6], count: 40 });
      expect(rows.map(({ arm, block, blockSize }) => ({ arm, block, blockSize }))).toEqual(expected);
    }
    const lists = new Set(STRATA.map((st) => s.filter((e) => e.stratum === st).map((e) => e.arm).join('')));
    expect(lists.size).toBe(STRATA.length);
  });

  it('rejects a repeated stratum', () => {
    expect(() =>
      generateSchedule({ studySeed: STUDY_SEED, strata: ['x', 'x'], arms: ARMS, blockSizes: [2], perStratum: 2 }),
    ).toThrow(/"x" is listed more than once/);
  });
});

describe('scheduleCommitment and verifyCommitment', () => {
  it('gives the same hash for the same schedule, in any row order', () => {
    const c = scheduleCommitment({ algorithmVersion: ALGORITHM_VERSION, seed: STUDY_SEED, schedule: schedule() });
    expect(c).toMatch(/^[0-9a-f]{64}$/);
    expect(scheduleCommitment({ algorithmVersion: ALGORITHM_VERSION, seed: STUDY_SEED, schedule: schedule() })).toBe(c);
    const reversed = [...schedule()].reverse();
    expect(scheduleCommitment({ algorithmVersion: ALGORITHM_VERSION, seed: STUDY_SEED, schedule: reversed })).toBe(c);
    expect(verifyCommitment({ algorithmVersion: ALGORITHM_VERSION, seed: STUDY_SEED, schedule: reversed, commitment: c })).toBe(true);
    expect(verifyCommitment({ algorithmVersion: ALGORITHM_VERSION, seed: STUDY_SEED, schedule: schedule(), commitment: c.toUpperCase() })).toBe(true);
  });

  it('detects one changed arm, a changed seed and a changed algorithm version', () => {
    const original = schedule();
    const commitment = scheduleCommitment({ algorithmVersion: ALGORITHM_VERSION, seed: STUDY_SEED, schedule: original });
    const tampered = original.map((e, i) => (i === 17 ? { ...e, arm: e.arm === 'EPM' ? 'EAM' : 'EPM' } : e));
    expect(scheduleCommitment({ algorithmVersion: ALGORITHM_VERSION, seed: STUDY_SEED, schedule: tampered })).not.toBe(commitment);
    expect(verifyCommitment({ algorithmVersion: ALGORITHM_VERSION, seed: STUDY_SEED, schedule: tampered, commitment })).toBe(false);
    expect(verifyCommitment({ algorithmVersion: ALGORITHM_VERSION, seed: 'other', schedule: original, commitment })).toBe(false);
    expect(verifyCommitment({ algorithmVersion: 'excursion-randomise/2', seed: STUDY_SEED, schedule: original, commitment })).toBe(false);
    expect(verifyCommitment({ algorithmVersion: ALGORITHM_VERSION, seed: STUDY_SEED, schedule: original, commitment: 'not-a-hash' })).toBe(false);
  });

  it('rejects a schedule with a repeated slot or a malformed row', () => {
    const s = schedule();
    expect(() => scheduleCommitment({ algorithmVersion: ALGORITHM_VERSION, seed: STUDY_SEED, schedule: [...s, s[0]] })).toThrow(/appears more than once/);
    expect(() =>
      scheduleCommitment({ algorithmVersion: ALGORITHM_VERSION, seed: STUDY_SEED, schedule: [{ ...s[0], slot: 0 }] }),
    ).toThrow(InvalidInputError);
  });
});
