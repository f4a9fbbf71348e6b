// Randomisation cores: permuted blocks with random block sizes (stratified, seeded, reproducible),
// Pocock–Simon minimisation, and a hash commitment over a generated allocation schedule.
// Everything here is pure: randomness comes from a seed string or from an rng passed in.
import seedrandom from 'seedrandom';
import { createHash, timingSafeEqual } from 'node:crypto';

/** Raised for arguments a person has to correct; the API layer turns it into HTTP 400. */
export class InvalidInputError extends Error {
  code = 'invalid_input' as const;
  constructor(message: string) {
    super(message);
    this.name = 'InvalidInputError';
  }
}

/**
 * Names the allocation algorithm. It is stored with every schedule and covered by the commitment, so
 * any change to how a seed turns into a list (draw order, shuffle, block choice) must bump this string.
 */
export const ALGORITHM_VERSION = 'excursion-randomise/1';

/** An arm of the study and its share in the allocation ratio (e.g. 1:1 → both ratio 1). */
export interface ArmRatio {
  code: string;
  ratio: number;
}

/** A prognostic factor used by minimisation, with its weight in the total imbalance. */
export interface MinimisationFactor {
  name: string;
  weight: number;
}

/** One slot of a generated allocation list. */
export interface BlockEntry {
  arm: string;
  block: number;
  blockSize: number;
}

/** One slot of a stratified allocation schedule. */
export interface ScheduleEntry {
  stratum: string;
  slot: number;
  arm: string;
  block: number;
  blockSize: number;
}

/** The inputs a schedule commitment covers. */
export interface CommitmentInput {
  algorithmVersion: string;
  seed: string;
  schedule: ScheduleEntry[];
}

// ---------------------------------------------------------------------------------------------
// Validation helpers

function show(value: unknown): string {
  if (typeof value === 'string') return JSON.stringify(value);
  if (typeof value === 'number' || typeof value === 'boolean' || value === null || value === undefined) {
    return String(value);
  }
  return typeof value;
}

function requireNonEmptyString(value: unknown, what: string): string {
  if (typeof value !== 'string' || value.length === 0) {
    throw new InvalidInputError(`${what} must be a non-empty text value (got ${show(value)}).`);
  }
  return value;
}

function requireArms(arms: unknown, minArms: number): ArmRatio[] {
  if (!Array.isArray(arms) || arms.length < minArms) {
    throw new InvalidInputError(`At least ${minArms} arms are needed (got ${Array.isArray(arms) ? arms.length : show(arms)}).`);
  }
  const seen = new Set<string>();
  arms.forEach((arm: unknown, i) => {
    if (typeof arm !== 'object' || arm === null) {
      throw new InvalidInputError(`Arm ${i + 1} must be an object with a code and a ratio.`);
    }
    const { code, ratio } = arm as { code?: unknown; ratio?: unknown };
    requireNonEmptyString(code, `The code of arm ${i + 1}`);
    if (seen.has(code as string)) {
      throw new InvalidInputError(`Arm code ${show(code)} is used more than once; arm codes must be unique.`);
    }
    seen.add(code as string);
    if (typeof ratio !== 'number' || !Number.isSafeInteger(ratio) || ratio < 1) {
      throw new InvalidInputError(
        `The ratio of arm ${show(code)} must be a positive whole number (got ${show(ratio)}).`,
      );
    }
  });
  return arms as ArmRatio[];
}

function ratioSum(arms: ArmRatio[]): number {
  return arms.reduce((s, a) => s + a.ratio, 0);
}

function requireBlockSizes(blockSizes: unknown, sum: number): number[] {
  if (!Array.isArray(blockSizes) || blockSizes.length === 0) {
    throw new InvalidInputError('At least one block size is needed.');
  }
  for (const size of blockSizes as unknown[]) {
    if (typeof size !== 'number' || !Number.isSafeInteger(size) || size < 1 || size % sum !== 0) {
      throw new InvalidInputError(
        `Block size ${show(size)} is not allowed: every block size must be a positive multiple of ` +
          `the sum of the allocation ratio (${sum}), so that each block holds the arms exactly in ratio.`,
      );
    }
  }
  return blockSizes as number[];
}

function requireCount(count: unknown, what: string): number {
  if (typeof count !== 'number' || !Number.isSafeInteger(count) || count < 0) {
    throw new InvalidInputError(`${what} must be a whole number of zero or more (got ${show(count)}).`);
  }
  return count;
}

/** Wraps an rng so a faulty generator (or test stub) fails loudly instead of skewing allocations. */
function checkedRng(rng: unknown): () => number {
  if (typeof rng !== 'function') throw new InvalidInputError('The random number source must be a function.');
  return () => {
    const u = (rng as () => unknown)();
    if (typeof u !== 'number' || !(u >= 0 && u < 1)) {
      throw new InvalidInputError(`The random number source returned ${show(u)}; it must return a number in [0, 1).`);
    }
    return u;
  };
}

/**
 * Uniform whole number in [0, n). The rng gives doubles with at least 52 random bits, so the bias of
 * floor(u·n) for the small n used here (block lengths, arm counts) is below 2^-40 and negligible;
 * the clamp only guards against floating-point rounding at the top end.
 */
function randomIndex(rng: () => number, n: number): number {
  return Math.min(n - 1, Math.floor(rng() * n));
}

// ---------------------------------------------------------------------------------------------
// Permuted blocks

/** Allocation list of exactly `count` slots in permuted blocks of randomly chosen sizes, reproducible from the seed. */
export function permutedBlocks({
  seed,
  arms,
  blockSizes,
  count,
}: {
  seed: string;
  arms: { code: string; ratio: number }[];
  blockSizes: number[];
  count: number;
}): { arm: string; block: number; blockSize: number }[] {
  requireNonEmptyString(seed, 'The seed');
  const checkedArms = requireArms(arms, 2);
  const sum = ratioSum(checkedArms);
  const sizes = requireBlockSizes(blockSizes, sum);
  const n = requireCount(count, 'The number of allocations');

  const rng = seedrandom(seed);
  const out: BlockEntry[] = [];
  let block = 0;
  // Draw order per block is fixed (size first, then the shuffle); it is part of ALGORITHM_VERSION.
  while (out.length < n) {
    block += 1;
    const size = sizes[randomIndex(rng, sizes.length)];
    const repeats = size / sum;
    const cards: string[] = [];
    for (const arm of checkedArms) {
      for (let r = 0; r < arm.ratio * repeats; r += 1) cards.push(arm.code);
    }
    // Fisher–Yates: position i swaps with a uniformly chosen position in [0, i], which gives every
    // distinct ordering of the block the same probability (swapping with any position would not).
    for (let i = cards.length - 1; i > 0; i -= 1) {
      const j = randomIndex(rng, i + 1);
      const tmp = cards[i];
      cards[i] = cards[j];
      cards[j] = tmp;
    }
    // The last block is cut short at `count`; its entries still report the size that was drawn.
    for (const arm of cards) {
      if (out.length >= n) break;
      out.push({ arm, block, blockSize: size });
    }
  }
  return out;
}

// ---------------------------------------------------------------------------------------------
// Minimisation

// Relative tolerance for calling two totals equal: totals are weighted sums of (possibly
// ratio-scaled) ranges, so floating point can differ in the last bits for what is really a tie.
const TIE_TOLERANCE = 1e-9;

/**
 * Pocock–Simon minimisation (range measure) for one new participant: returns the chosen arm and each arm's total imbalance G.
 *
 * For candidate arm k and factor i, only earlier participants with the new participant's level of
 * factor i are counted, per arm, with the new participant added to arm k. Each count is divided by
 * its arm's ratio before the range (max − min) is taken, so that for unequal ratios "balanced" means
 * "in the target ratio" (2:1 with counts 6/3 gives range 0); at 1:1 this is the plain range.
 * G_k = Σ weight_i × range_ik. The arm with the smallest G is chosen with probability pBest, otherwise
 * one of the other arms with equal probability; when several arms share the smallest G one of them is
 * taken at random with equal probability, and when all arms tie the choice is uniform over all arms.
 * Exactly one value is drawn from rng per call, which keeps an allocation log easy to replay.
 * pBest is accepted in (0, 1]; with two arms only 0.5 to 1 favours balance (0.8 is common practice).
 * Every earlier participant must carry a level for every factor and be on one of the arms.
 */
export function minimise({
  arms,
  factors,
  existing,
  participant,
  pBest,
  rng,
}: {
  arms: { code: string; ratio: number }[];
  factors: { name: string; weight: number }[];
  existing: { arm: string; levels: Record<string, string> }[];
  participant: Record<string, string>;
  pBest: number;
  rng: () => number;
}): { arm: string; imbalance: Record<string, number> } {
  const checkedArms = requireArms(arms, 2);
  const draw = checkedRng(rng);
  if (typeof pBest !== 'number' || !(pBest > 0 && pBest <= 1)) {
    throw new InvalidInputError(
      `The probability of choosing the least-imbalanced arm must be greater than 0 and at most 1 (got ${show(pBest)}).`,
    );
  }
  if (!Array.isArray(factors) || factors.length === 0) {
    throw new InvalidInputError('Minimisation needs at least one factor.');
  }
  const factorNames = new Set<string>();
  factors.forEach((f, i) => {
    if (typeof f !== 'object' || f === null) throw new InvalidInputError(`Factor ${i + 1} must have a name and a weight.`);
    requireNonEmptyString(f.name, `The name of factor ${i + 1}`);
    if (factorNames.has(f.name)) throw new InvalidInputError(`Factor ${show(f.name)} is listed more than once.`);
    factorNames.add(f.name);
    if (typeof f.weight !== 'number' || !Number.isFinite(f.weight) || f.weight < 0) {
      throw new InvalidInputError(`The weight of factor ${show(f.name)} must be a finite number of zero or more (got ${show(f.weight)}).`);
    }
  });
  if (typeof participant !== 'object' || participant === null) {
    throw new InvalidInputError('The new participant must be given as factor levels.');
  }
  for (const f of factors) {
    requireNonEmptyString(participant[f.name], `The new participant's level of factor ${show(f.name)}`);
  }
  if (!Array.isArray(existing)) throw new InvalidInputError('The earlier participants must be given as a list.');

  const armIndex = new Map(checkedArms.map((a, i) => [a.code, i] as const));
  // matches[i][l]: earlier participants on arm l sharing the new participant's level of factor i.
  const matches = factors.map(() => checkedArms.map(() => 0));
  existing.forEach((e, p) => {
    const l = e && typeof e === 'object' ? armIndex.get(e.arm) : undefined;
    if (l === undefined) {
      throw new InvalidInputError(`Earlier participant ${p + 1} is on arm ${show(e?.arm)}, which is not an arm of this study.`);
    }
    factors.forEach((f, i) => {
      const level = e.levels?.[f.name];
      requireNonEmptyString(level, `The level of factor ${show(f.name)} for earlier participant ${p + 1}`);
      if (level === participant[f.name]) matches[i][l] += 1;
    });
  });

  const totals = checkedArms.map((_, k) => {
    let g = 0;
    factors.forEach((f, i) => {
      const scaled = checkedArms.map((a, l) => (matches[i][l] + (l === k ? 1 : 0)) / a.ratio);
      g += f.weight * (Math.max(...scaled) - Math.min(...scaled));
    });
    return g;
  });

  const min = Math.min(...totals);
  const isBest = (g: number) => g - min <= TIE_TOLERANCE * Math.max(1, Math.abs(min));
  const best = checkedArms.filter((_, k) => isBest(totals[k]));
  const others = checkedArms.filter((_, k) => !isBest(totals[k]));

  const u = draw();
  let chosen: ArmRatio;
  if (others.length === 0) {
    chosen = best[randomIndex(() => u, best.length)];
  } else if (u < pBest) {
    // Rescale the part of [0, 1) below pBest to [0, 1) to pick among tied best arms with the same draw.
    chosen = best[randomIndex(() => u / pBest, best.length)];
  } else {
    chosen = others[randomIndex(() => (u - pBest) / (1 - pBest), others.length)];
  }

  const imbalance: Record<string, number> = {};
  checkedArms.forEach((a, k) => {
    imbalance[a.code] = totals[k];
  });
  return { arm: chosen.code, imbalance };
}

// ---------------------------------------------------------------------------------------------
// Strata, schedules and commitments

/** Derives an independent seed for one stratum as the SHA-256 hex of the study seed and the stratum key. */
export function stratumSeed(studySeed: string, stratumKey: string): string {
  requireNonEmptyString(studySeed, 'The study seed');
  if (typeof stratumKey !== 'string') throw new InvalidInputError('The stratum key must be text.');
  // The NUL separator keeps ("ab", "c") and ("a", "bc") apart.
  return createHash('sha256').update(`${studySeed}\u0000${stratumKey}`, 'utf8').digest('hex');
}

/** Canonical stratum key such as 'site=HHC|fingers=1', in the given factor order; other keys in levels are ignored. */
export function stratumKey(levels: Record<string, string>, factorOrder: string[]): string {
  if (typeof levels !== 'object' || levels === null) throw new InvalidInputError('The stratum levels must be given as an object.');
  if (!Array.isArray(factorOrder)) throw new InvalidInputError('The factor order must be a list of factor names.');
  const seen = new Set<string>();
  return factorOrder
    .map((name) => {
      requireNonEmptyString(name, 'A stratification factor name');
      if (seen.has(name)) throw new InvalidInputError(`Stratification factor ${show(name)} is listed more than once.`);
      seen.add(name);
      const level = requireNonEmptyString(levels[name], `The level of stratification factor ${show(name)}`);
      // '=' and '|' are the separators; allowing them inside names would make two strata share a key.
      for (const [what, text] of [['factor name', name], ['level', level]] as const) {
        if (text.includes('=') || text.includes('|')) {
          throw new InvalidInputError(`The ${what} ${show(text)} must not contain "=" or "|".`);
        }
      }
      return `${name}=${level}`;
    })
    .join('|');
}

/** Stratified allocation schedule: an independent permuted-block list of `perStratum` slots for each stratum. */
export function generateSchedule({
  studySeed,
  strata,
  arms,
  blockSizes,
  perStratum,
}: {
  studySeed: string;
  strata: string[];
  arms: { code: string; ratio: number }[];
  blockSizes: number[];
  perStratum: number;
}): { stratum: string; slot: number; arm: string; block: number; blockSize: number }[] {
  requireNonEmptyString(studySeed, 'The study seed');
  if (!Array.isArray(strata) || strata.length === 0) throw new InvalidInputError('At least one stratum is needed.');
  const seen = new Set<string>();
  for (const s of strata) {
    if (typeof s !== 'string') throw new InvalidInputError(`Stratum ${show(s)} must be a text key.`);
    if (seen.has(s)) throw new InvalidInputError(`Stratum ${show(s)} is listed more than once.`);
    seen.add(s);
  }
  requireCount(perStratum, 'The number of slots per stratum');
  const out: ScheduleEntry[] = [];
  for (const stratum of strata) {
    const list = permutedBlocks({ seed: stratumSeed(studySeed, stratum), arms, blockSizes, count: perStratum });
    list.forEach((e, i) => out.push({ stratum, slot: i + 1, arm: e.arm, block: e.block, blockSize: e.blockSize }));
  }
  return out;
}

/** Orders by code units, never by locale, so the canonical form is the same on every machine. */
function compareText(a: string, b: string): number {
  return a < b ? -1 : a > b ? 1 : 0;
}

function canonicalJson(value: unknown): string {
  if (Array.isArray(value)) return `[${value.map(canonicalJson).join(',')}]`;
  if (value !== null && typeof value === 'object') {
    const keys = Object.keys(value as Record<string, unknown>).sort(compareText);
    return `{${keys.map((k) => `${JSON.stringify(k)}:${canonicalJson((value as Record<string, unknown>)[k])}`).join(',')}}`;
  }
  return JSON.stringify(value);
}

function canonicalSchedule(schedule: unknown): ScheduleEntry[] {
  if (!Array.isArray(schedule)) throw new InvalidInputError('The schedule must be a list of slots.');
  const entries = schedule.map((e: unknown, i): ScheduleEntry => {
    const r = (e ?? {}) as Partial<ScheduleEntry>;
    if (typeof r.stratum !== 'string') throw new InvalidInputError(`Schedule entry ${i + 1} has no stratum.`);
    requireNonEmptyString(r.arm, `The arm of schedule entry ${i + 1}`);
    for (const key of ['slot', 'block', 'blockSize'] as const) {
      const v = r[key];
      if (typeof v !== 'number' || !Number.isSafeInteger(v) || v < 1) {
        throw new InvalidInputError(`The ${key} of schedule entry ${i + 1} must be a positive whole number (got ${show(v)}).`);
      }
    }
    // Copy only the known fields so stray properties cannot change (or fail to change) the hash.
    return { stratum: r.stratum, slot: r.slot!, arm: r.arm!, block: r.block!, blockSize: r.blockSize! };
  });
  entries.sort((a, b) => compareText(a.stratum, b.stratum) || a.slot - b.slot);
  for (let i = 1; i < entries.length; i += 1) {
    if (entries[i].stratum === entries[i - 1].stratum && entries[i].slot === entries[i - 1].slot) {
      throw new InvalidInputError(`Slot ${entries[i].slot} of stratum ${show(entries[i].stratum)} appears more than once.`);
    }
  }
  return entries;
}

/** SHA-256 hex over the canonical JSON of algorithm version, seed and schedule (sorted keys, ordered by stratum then slot). */
export function scheduleCommitment({ algorithmVersion, seed, schedule }: CommitmentInput): string {
  requireNonEmptyString(algorithmVersion, 'The algorithm version');
  requireNonEmptyString(seed, 'The seed');
  const body = canonicalJson({ algorithmVersion, seed, schedule: canonicalSchedule(schedule) });
  return createHash('sha256').update(body, 'utf8').digest('hex');
}

/** True when the commitment matches the given algorithm version, seed and schedule; a malformed commitment is false. */
export function verifyCommitment({ algorithmVersion, seed, schedule, commitment }: CommitmentInput & { commitment: string }): boolean {
  const expected = scheduleCommitment({ algorithmVersion, seed, schedule });
  if (typeof commitment !== 'string' || !/^[0-9a-f]{64}$/i.test(commitment)) return false;
  // Constant-time comparison: the check runs on the server, where timing should reveal nothing.
  return timingSafeEqual(Buffer.from(expected, 'hex'), Buffer.from(commitment.toLowerCase(), 'hex'));
}
