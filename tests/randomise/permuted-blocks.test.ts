import { describe, it, expect } from 'vitest';
import { jStat } from 'jstat';
import { permutedBlocks, InvalidInputError } from '@/lib/randomise';

const ONE_TO_ONE = [
  { code: 'EPM', ratio: 1 },
  { code: 'EAM', ratio: 1 },
];
const TWO_TO_ONE = [
  { code: 'A', ratio: 2 },
  { code: 'B', ratio: 1 },
];

function groupBlocks(list: { arm: string; block: number; blockSize: number }[]) {
  const blocks = new Map<number, { size: number; arms: string[] }>();
  for (const e of list) {
    const b = blocks.get(e.block) ?? { size: e.blockSize, arms: [] };
    expect(e.blockSize).toBe(b.size); // one size per block
    b.arms.push(e.arm);
    blocks.set(e.block, b);
  }
  return [...blocks.entries()].sort((a, b) => a[0] - b[0]).map(([, b]) => b);
}

function countOf(arms: string[], code: string) {
  return arms.filter((a) => a === code).length;
}

/** Chi-square goodness-of-fit p-value for observed counts against expected counts. */
function chiSquareP(observed: number[], expected: number[]) {
  const stat = observed.reduce((s, o, i) => s + (o - expected[i]) ** 2 / expected[i], 0);
  return 1 - jStat.chisquare.cdf(stat, observed.length - 1);
}

describe('permutedBlocks', () => {
  it('gives the identical list for the same arguments (PB-4: reproducible from seed and algorithm version, common practice)', () => {
    const args = { seed: 'TEMPO-FT|site=HHC|fingers=1', arms: ONE_TO_ONE, blockSizes: [2, 4, 6], count: 60 };
    const first = permutedBlocks(args);
    expect(first).toHaveLength(60);
    expect(permutedBlocks({ ...args, arms: ONE_TO_ONE.map((a) => ({ ...a })), blockSizes: [2, 4, 6] })).toEqual(first);
  });

  it('gives different lists for different seeds', () => {
    const a = permutedBlocks({ seed: 'seed-a', arms: ONE_TO_ONE, blockSizes: [2, 4, 6], count: 50 });
    const b = permutedBlocks({ seed: 'seed-b', arms: ONE_TO_ONE, blockSizes: [2, 4, 6], count: 50 });
    expect(a.map((e) => e.arm)).not.toEqual(b.map((e) => e.arm));
  });

  it('holds every complete block exactly in ratio at 1:1 and 2:1 (PB-2, CONSORT glossary "Permuted block design"; PB-4)', () => {
    for (let s = 0; s < 50; s += 1) {
      const even = groupBlocks(permutedBlocks({ seed: `even-${s}`, arms: ONE_TO_ONE, blockSizes: [2, 4, 6], count: 200 }));
      for (const b of even.slice(0, -1)) {
        expect(b.arms).toHaveLength(b.size);
        expect(countOf(b.arms, 'EPM')).toBe(b.size / 2);
        expect(countOf(b.arms, 'EAM')).toBe(b.size / 2);
      }
      const uneven = groupBlocks(permutedBlocks({ seed: `uneven-${s}`, arms: TWO_TO_ONE, blockSizes: [3, 6, 12], count: 200 }));
      for (const b of uneven.slice(0, -1)) {
        expect(b.arms).toHaveLength(b.size);
        expect(countOf(b.arms, 'A')).toBe((b.size * 2) / 3);
        expect(countOf(b.arms, 'B')).toBe(b.size / 3);
      }
    }
  });

  it('CONSORT glossary example (PB-2): a block of 12 at 2:1 holds 8 A and 4 B', () => {
    const list = permutedBlocks({ seed: 'glossary', arms: TWO_TO_ONE, blockSizes: [12], count: 12 });
    expect(countOf(list.map((e) => e.arm), 'A')).toBe(8);
    expect(countOf(list.map((e) => e.arm), 'B')).toBe(4);
  });

  it('draws block sizes only from the given set, and uses each of them', () => {
    const used = new Set<number>();
    for (let s = 0; s < 20; s += 1) {
      for (const e of permutedBlocks({ seed: `sizes-${s}`, arms: ONE_TO_ONE, blockSizes: [4, 6, 8], count: 100 })) {
        used.add(e.blockSize);
      }
    }
    expect([...used].sort((a, b) => a - b)).toEqual([4, 6, 8]);
  });

  it('honours count, cutting the last block short, and numbers blocks from 1', () => {
    const list = permutedBlocks({ seed: 'short', arms: ONE_TO_ONE, blockSizes: [4], count: 7 });
    expect(list).toHaveLength(7);
    expect(list.map((e) => e.block)).toEqual([1, 1, 1, 1, 2, 2, 2]);
    expect(list.every((e) => e.blockSize === 4)).toBe(true);
    expect(permutedBlocks({ seed: 'short', arms: ONE_TO_ONE, blockSizes: [4], count: 0 })).toEqual([]);
    // A longer list starts with the shorter one: count only decides where the list stops.
    expect(permutedBlocks({ seed: 'short', arms: ONE_TO_ONE, blockSizes: [4], count: 12 }).slice(0, 7)).toEqual(list);
  });

  it('PB-1 (derived from b!/((b/k)!)^k; Efird 2011, IJERPH 8:15, gives 6 for b = 4): observed distinct orderings are 6 for size 4 and 20 for size 6 at 1:1', () => {
    const orderings = (size: number, seeds: number, arms = ONE_TO_ONE) => {
      const seen = new Set<string>();
      for (let s = 0; s < seeds; s += 1) {
        seen.add(permutedBlocks({ seed: `pb1-${size}-${s}`, arms, blockSizes: [size], count: size }).map((e) => e.arm).join(','));
      }
      return seen;
    };
    expect(orderings(4, 300).size).toBe(6);
    expect(orderings(6, 800).size).toBe(20);
    // PB-1 for k = 3: b = 6 → 6!/(2!)^3 = 90.
    const three = [{ code: 'A', ratio: 1 }, { code: 'B', ratio: 1 }, { code: 'C', ratio: 1 }];
    expect(orderings(6, 3000, three).size).toBe(90);
  });

  it('PB-1 / Efird 2011: the 6 orderings of a size-4 block are equally likely (chi-square goodness of fit, p > 0.001)', () => {
    const tally = new Map<string, number>();
    const seeds = 1200;
    for (let s = 0; s < seeds; s += 1) {
      const key = permutedBlocks({ seed: `uniform-${s}`, arms: ONE_TO_ONE, blockSizes: [4], count: 4 }).map((e) => e.arm).join(',');
      tally.set(key, (tally.get(key) ?? 0) + 1);
    }
    expect(tally.size).toBe(6);
    const observed = [...tally.values()];
    expect(chiSquareP(observed, observed.map(() => seeds / 6))).toBeGreaterThan(0.001);
  });

  it('PB-4 (common practice, no source): within a stratum the running imbalance never exceeds the largest block size / 2', () => {
    for (let s = 0; s < 100; s += 1) {
      let diff = 0;
      let worst = 0;
      for (const e of permutedBlocks({ seed: `pb4-${s}`, arms: ONE_TO_ONE, blockSizes: [2, 4, 6], count: 150 })) {
        diff += e.arm === 'EPM' ? 1 : -1;
        worst = Math.max(worst, Math.abs(diff));
      }
      expect(worst).toBeLessThanOrEqual(3);
    }
  });

  it('over 200 seeds the share of arm EPM at 1:1 is consistent with 0.5 (chi-square goodness of fit, p > 0.001)', () => {
    let firstEpm = 0;
    let totalEpm = 0;
    const seeds = 200;
    const count = 101; // odd, so a single list cannot be exactly balanced
    for (let s = 0; s < seeds; s += 1) {
      const list = permutedBlocks({ seed: `share-${s}`, arms: ONE_TO_ONE, blockSizes: [2, 4, 6], count });
      if (list[0].arm === 'EPM') firstEpm += 1;
      totalEpm += countOf(list.map((e) => e.arm), 'EPM');
    }
    // The first slot of each list is a single fair draw, so this is the sharper check of the two.
    expect(chiSquareP([firstEpm, seeds - firstEpm], [seeds / 2, seeds / 2])).toBeGreaterThan(0.001);
    expect(chiSquareP([totalEpm, seeds * count - totalEpm], [(seeds * count) / 2, (seeds * count) / 2])).toBeGreaterThan(0.001);
  });

  it('rejects a block size that is not a multiple of the ratio sum (PB-2) and other invalid input', () => {
    const base = { seed: 's', arms: ONE_TO_ONE, blockSizes: [4], count: 10 };
    expect(() => permutedBlocks({ ...base, blockSizes: [3] })).toThrow(InvalidInputError);
    expect(() => permutedBlocks({ ...base, blockSizes: [4, 5] })).toThrow(/Block size 5/);
    expect(() => permutedBlocks({ ...base, arms: TWO_TO_ONE, blockSizes: [4] })).toThrow(/multiple of the sum of the allocation ratio \(3\)/);
    expect(() => permutedBlocks({ ...base, blockSizes: [] })).toThrow(InvalidInputError);
    expect(() => permutedBlocks({ ...base, blockSizes: [0] })).toThrow(InvalidInputError);
    expect(() => permutedBlocks({ ...base, arms: [{ code: 'A', ratio: 1.5 }, { code: 'B', ratio: 1 }] })).toThrow(/ratio of arm "A"/);
    expect(() => permutedBlocks({ ...base, arms: [{ code: 'A', ratio: 0 }, { code: 'B', ratio: 1 }] })).toThrow(InvalidInputError);
    expect(() => permutedBlocks({ ...base, arms: [{ code: 'A', ratio: 1 }, { code: 'A', ratio: 1 }] })).toThrow(/"A" is used more than once/);
    expect(() => permutedBlocks({ ...base, arms: [{ code: 'A', ratio: 1 }] })).toThrow(InvalidInputError);
    expect(() => permutedBlocks({ ...base, count: -1 })).toThrow(InvalidInputError);
    expect(() => permutedBlocks({ ...base, count: 2.5 })).toThrow(InvalidInputError);
    expect(() => permutedBlocks({ ...base, seed: '' })).toThrow(InvalidInputError);
    let caught: unknown = null;
    try {
      permutedBlocks({ ...base, blockSizes: [3] });
    } catch (e) {
      caught = e;
    }
    expect(caught).toBeInstanceOf(InvalidInputError);
    expect((caught as InvalidInputError).code).toBe('invalid_input');
  });
});
