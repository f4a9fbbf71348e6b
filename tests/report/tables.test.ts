// Trial report tables on hand-built datasets with known answers. The outcome values are chosen so the table's
// statistics can be checked against published results (IDs from the published check values, §4 and §1–2):
// - R-T1: Welch t test on R's `sleep` data (Cushny & Peebles 1905, via R's t.test help page; published-values.md §4).
// - R-W4: Wilcoxon rank-sum test, R ?wilcox.test (Hollander & Wolfe 1973 data): W = 35, exact two-sided p = 764/3003.
// - NC-2: Newcombe RG, Stat Med 1998;17:873–890, Table II, method 10: 9/10 − 3/10 → 0.1705 to 0.8090.
// - TAM-E1 (ASSH TAM definition) and QD-E1 / QD-E3 (QuickDASH scoring, Gummesson et al. 2006) for the values the
//   report derives again from raw measures.
import { describe, it, expect } from 'vitest';
import {
  buildReport,
  primaryValue,
  quickDashValue,
  ruptureValue,
  TOTAL,
  type ReportArm,
  type ReportDataset,
  type ReportParticipant,
  type ReportRecord,
} from '@/lib/report/tables';
import { formatCI, formatCountPct, formatMeanSd, formatMedianIqr, formatNumber, formatP, formatPStatement } from '@/lib/report/format';

const ARMS: ReportArm[] = [
  { code: 'EPM', label: 'Early passive motion' },
  { code: 'EAM', label: 'Early active motion' },
];

// R `sleep` data (R-T1): group 1 and group 2, in order.
const SLEEP_1 = [0.7, -1.6, -0.2, -1.2, -0.1, 3.4, 3.7, 0.8, 0.0, 2.0];
const SLEEP_2 = [1.9, 0.8, 1.1, 0.1, -0.1, 4.4, 5.5, 1.6, 4.6, 3.4];
// A common shift moves both means but leaves Welch's difference, interval, t, df and p unchanged [derived], and turns
// the hours into plausible percentages of the other hand.
const SHIFT = 60;
// R-W4 data; a positive scale factor leaves ranks, W and p unchanged [derived]. x → EAM, y → EPM.
const RW4_X = [0.8, 0.83, 1.89, 1.04, 1.45, 1.38, 1.91, 1.64, 0.73, 1.46].map((v) => Math.round(v * 1000) / 100);
const RW4_Y = [1.15, 0.88, 0.9, 0.74, 1.21].map((v) => Math.round(v * 1000) / 100);

const followUp = (visitKey: string, tamPct: number | null, quickdash: number | null): ReportRecord => ({
  formKey: 'follow_up',
  visitKey,
  data: {
    VISDAT: '2026-06-01',
    derived_scores: {
      tam_by_finger: tamPct === null ? [] : [{ hand: 'right', finger: 'middle', tam: 200, tam_pct_contralateral: tamPct, grade: null }],
      quickdash_score: quickdash,
      grip_ratio_pct: null,
    },
  },
});
const rupture = (): ReportRecord => ({ formKey: 'adverse_event', visitKey: '', data: { AETERM: 'FDP rupture', AECAT: 'tendon_rupture', AESER: 'N' } });
const otherAe = (): ReportRecord => ({ formKey: 'adverse_event', visitKey: '', data: { AETERM: 'Stiff PIP', AECAT: 'stiffness', AESER: 'N' } });

function participant(subjectCode: string, arm: string, records: ReportRecord[], extra: Partial<ReportParticipant> = {}): ReportParticipant {
  return { subjectCode, site: 'HHC', arm, unblinded: false, unblindedAt: null, records, ...extra };
}

function dataset(participants: ReportParticipant[], arms = ARMS): ReportDataset {
  return { study: { code: 'TEST', title: 'Test' }, arms, source: { kind: 'live', asOf: '2026-12-02T00:00:00.000Z', label: 'test' }, participants };
}

/**
 * Ten participants per arm. Primary: EPM = sleep group 1 + 60, EAM = sleep group 2 + 60 (R-T1).
 * QuickDASH: EAM = R-W4 x (10 values), EPM = R-W4 y (5 values) and 5 not calculable.
 * Rupture: 9 of 10 in EAM and 3 of 10 in EPM (NC-2).
 */
function publishedDataset(): ReportDataset {
  const ps: ReportParticipant[] = [];
  for (let i = 0; i < 10; i++) {
    ps.push(participant(`P-EPM-${String(i).padStart(2, '0')}`, 'EPM', [followUp('week12', SLEEP_1[i] + SHIFT, i < 5 ? RW4_Y[i] : null), ...(i < 3 ? [rupture()] : [otherAe()])]));
    ps.push(participant(`P-EAM-${String(i).padStart(2, '0')}`, 'EAM', [followUp('week12', SLEEP_2[i] + SHIFT, RW4_X[i]), ...(i < 9 ? [rupture()] : [])]));
  }
  return dataset(ps);
}

/** |actual − expected| ≤ tolerance, with both numbers in the message. */
function near(actual: number, expected: number, tolerance: number) {
  expect(Math.abs(actual - expected), `actual ${actual}, expected ${expected}`).toBeLessThanOrEqual(tolerance);
}

/** Fisher's exact two-sided p by exact enumeration of the hypergeometric support (BigInt), independent of lib/stats. */
function fisherTwoSidedExact(a: number, b: number, c: number, d: number): number {
  const choose = (n: number, k: number): bigint => {
    let r = 1n;
    for (let i = 1; i <= k; i++) r = (r * BigInt(n - k + i)) / BigInt(i);
    return r;
  };
  const row1 = a + b;
  const col1 = a + c;
  const n = a + b + c + d;
  const weight = (x: number) => choose(col1, x) * choose(n - col1, row1 - x);
  const lo = Math.max(0, row1 - (n - col1));
  const hi = Math.min(row1, col1);
  const observed = weight(a);
  let tail = 0n;
  let total = 0n;
  for (let x = lo; x <= hi; x++) {
    const w = weight(x);
    total += w;
    if (w <= observed) tail += w;
  }
  return Number((tail * 10n ** 15n) / total) / 1e15;
}

describe('primary outcome: difference in means with Welch', () => {
  const r = buildReport(publishedDataset());

  it('R-T1: EAM − EPM on the (shifted) sleep data: difference 1.58, 95 % CI −0.2054832 to 3.3654832, t = 1.8608, df = 17.776, p = 0.07939', () => {
    const c = r.primary.comparison!;
    expect(c.contrast).toBe('EAM \u2212 EPM');
    expect(c.method).toContain('Welch');
    // Against the full-precision values computed for R-T1 (sign reversed: the report takes arm 2 − arm 1), with the
    // 1e-7 tolerance §4.1 recommends: those reference values come from jstat, whose t quantiles are good to ~1e-8.
    near(c.estimate, 1.58, 1e-12);
    near(c.ci95[0], -0.20548321036459538, 1e-7);
    near(c.ci95[1], 3.3654832103645944, 1e-7);
    near(c.t, 1.8608134674868526, 1e-12);
    near(c.df, 17.776473516178495, 1e-9);
    near(c.p, 0.0793941403537773, 1e-7);
    // And as R prints them.
    expect(c.ci95[0].toFixed(7)).toBe('-0.2054832');
    expect(c.ci95[1].toFixed(7)).toBe('3.3654832');
    expect(c.p.toFixed(5)).toBe('0.07939');
    expect(c.text).toBe('1.6 (95 % CI \u22120.2 to 3.4); p = 0.079');
  });

  it('R-T1: arm means are 60.75 and 62.33 (sleep means 0.75 and 2.33 plus 60); no participant missing', () => {
    const [epm, eam] = r.primary.byArm;
    expect(epm).toMatchObject({ arm: 'EPM', n: 10, missing: 0 });
    expect(eam).toMatchObject({ arm: 'EAM', n: 10, missing: 0 });
    expect(epm.mean).toBeCloseTo(60.75, 10);
    expect(eam.mean).toBeCloseTo(62.33, 10);
    expect(r.primary.points).toHaveLength(20);
    expect(r.primary.points.filter((p) => p.arm === 'EAM').map((p) => p.value)).toEqual(SLEEP_2.map((v) => v + SHIFT));
  });

  it('each arm mean carries its one-sample t interval, mean ± t(0.975; 9)·SD/√10 (NIST e-Handbook 1.3.6.7.2: t(0.975; 9) = 2.262)', () => {
    const epm = r.primary.byArm[0];
    const se = epm.sd! / Math.sqrt(10);
    expect(epm.mean! - epm.meanCI95![0]).toBeCloseTo(epm.meanCI95![1] - epm.mean!, 10);
    expect((epm.meanCI95![1] - epm.mean!) / se).toBeCloseTo(2.262, 3);
    expect(epm.text).toBe(formatMeanSd(epm.mean, epm.sd, 1));
  });
});

describe('secondary outcomes', () => {
  const r = buildReport(publishedDataset());

  it('R-W4: QuickDASH EAM against EPM by Mann–Whitney: W = 35, exact two-sided p = 764/3003 = 0.2544', () => {
    const c = r.secondary.quickdash.comparison!;
    expect(c.W).toBe(35);
    expect(c.exact).toBe(true);
    expect(c.p).toBeCloseTo(764 / 3003, 12);
    expect(c.text).toBe('W = 35.0; p = 0.254');
  });

  it('[derived] QuickDASH medians and type-7 quartiles by arm; 5 EPM scores not calculable count as missing', () => {
    const [epm, eam] = r.secondary.quickdash.byArm;
    expect(epm).toMatchObject({ n: 5, missing: 5 });
    expect(eam).toMatchObject({ n: 10, missing: 0 });
    // EPM (R-W4 y × 10): 7.4, 8.8, 9.0, 11.5, 12.1 → median 9.0, Q1 8.8, Q3 11.5.
    expect([epm.median, epm.q1, epm.q3]).toEqual([9, 8.8, 11.5]);
    // EAM (R-W4 x × 10): sorted 7.3 8.0 8.3 10.4 13.8 14.5 14.6 16.4 18.9 19.1 → median 14.15, Q1 at h = 2.25: 8.825, Q3 at h = 6.75: 15.95.
    expect(eam.median).toBeCloseTo(14.15, 10);
    expect(eam.q1).toBeCloseTo(8.825, 10);
    expect(eam.q3).toBeCloseTo(15.95, 10);
    expect(eam.text).toBe(formatMedianIqr(eam.median, eam.q1, eam.q3, 1));
  });

  it('NC-2: tendon rupture 9/10 (EAM) − 3/10 (EPM): risk difference 0.6, Newcombe 95 % CI 0.1705 to 0.8090; Fisher two-sided p by exact enumeration', () => {
    const [epm, eam] = r.secondary.rupture.byArm;
    expect(epm).toMatchObject({ events: 3, n: 10, missing: 0, text: '3/10 (30.0 %)' });
    expect(eam).toMatchObject({ events: 9, n: 10, missing: 0, text: '9/10 (90.0 %)' });
    const c = r.secondary.rupture.comparison!;
    expect(c.riskDifference).toBeCloseTo(0.6, 12);
    // Published to 4 dp (Newcombe 1998 Table II); computed 0.170523 to 0.809018.
    expect(c.ci95[0]).toBeCloseTo(0.170523, 6);
    expect(c.ci95[1]).toBeCloseTo(0.809018, 6);
    expect(c.ci95[0].toFixed(4)).toBe('0.1705');
    expect(c.ci95[1].toFixed(4)).toBe('0.8090');
    // [derived] hypergeometric enumeration of the table [[9, 1], [3, 7]]: 83/4199.
    expect(c.p).toBeCloseTo(fisherTwoSidedExact(9, 1, 3, 7), 12);
    expect(c.p).toBeCloseTo(83 / 4199, 12);
    expect(c.text).toBe('60.0 percentage points (95 % CI 17.1 to 80.9); p = 0.020');
  });
});

describe('values derived again from raw measures when a dataset carries no derived scores', () => {
  const op: ReportRecord = {
    formKey: 'operation',
    visitKey: '',
    data: { INJDAT: '2026-01-01', REPDAT: '2026-01-02', hand: 'right', fingers: [{ finger: 'middle', zone: 'II' }] },
  };
  const raw = (quickdash: (number | null)[]): ReportRecord => ({
    formKey: 'follow_up',
    visitKey: 'week12',
    data: {
      goniometry: [
        // TAM-E1: injured 85/100/60 with deficits 0/15/10 → 220°; other hand 90/105/70, no deficits → 265°.
        { hand: 'right', finger: 'middle', mcp_flexion: 85, pip_flexion: 100, dip_flexion: 60, mcp_ext_deficit: 0, pip_ext_deficit: 15, dip_ext_deficit: 10 },
        { hand: 'left', finger: 'middle', mcp_flexion: 90, pip_flexion: 105, dip_flexion: 70, mcp_ext_deficit: 0, pip_ext_deficit: 0, dip_ext_deficit: 0 },
      ],
      quickdash,
    },
  });

  it('TAM-E1: 220/265 = 83.02 % of the other hand; QD-E1: QuickDASH 38.64', () => {
    const p = participant('RAW-1', 'EPM', [op, raw([2, 3, 1, 4, 2, 3, 1, 2, 5, 3, 2])]);
    expect(primaryValue(p)).toBeCloseTo(83.02, 10);
    expect(quickDashValue(p)).toBeCloseTo(38.64, 10);
  });

  it('QD-E3: two QuickDASH items missing → not calculable, so the score is missing (the TAM is not)', () => {
    const p = participant('RAW-2', 'EPM', [op, raw([3, 3, 2, 4, null, 2, 1, null, 4, 2, 3])]);
    expect(quickDashValue(p)).toBeNull();
    expect(primaryValue(p)).toBeCloseTo(83.02, 10);
  });

  it('[derived] two repaired fingers: the participant’s value is the mean of the fingers’ percentages', () => {
    const p = participant('TWO', 'EAM', [
      { formKey: 'follow_up', visitKey: 'week12', data: { derived_scores: { tam_by_finger: [{ tam_pct_contralateral: 80 }, { tam_pct_contralateral: 90 }, { tam_pct_contralateral: null }], quickdash_score: null } } },
    ]);
    expect(primaryValue(p)).toBe(85);
    expect(primaryValue(p, 'week6')).toBeNull();
  });
});

describe('baseline characteristics', () => {
  const baseline = (AGE: number, SEX: string, hand_dominance = 'right', diabetes = 'N'): ReportRecord => ({
    formKey: 'baseline', visitKey: '', data: { AGE, SEX, hand_dominance, occupation: 'office', smoking: 'never', diabetes },
  });
  const operation = (INJDAT: string, REPDAT: string, hand: string, zones: string[], derivedCount?: number): ReportRecord => ({
    formKey: 'operation', visitKey: '',
    data: { INJDAT, REPDAT, hand, fingers: zones.map((zone, i) => ({ finger: ['index', 'middle', 'ring', 'little'][i], zone })), ...(derivedCount !== undefined ? { n_injured_fingers: derivedCount } : {}) },
  });
  const ds = dataset([
    participant('B-1', 'EPM', [baseline(30, 'F'), operation('2026-01-10', '2026-01-10', 'right', ['II'], 1)]),
    participant('B-2', 'EPM', [baseline(40, 'M', 'left'), operation('2026-01-10', '2026-01-11', 'right', ['II', 'III'], 2)]),
    // 2026 is not a leap year: 27 February → 2 March is 3 days.
    participant('B-3', 'EPM', [baseline(50, 'M', 'ambidextrous', 'Y'), operation('2026-02-27', '2026-03-02', 'left', ['II'])]),
    participant('B-4', 'EAM', [baseline(20, 'F'), operation('2026-03-01', '2026-03-03', 'right', ['I'])]),
    participant('B-5', 'EAM', [baseline(60, 'F', 'left')]), // no operation record: injury items missing
    participant('B-6', 'EAM', []), // no baseline either
  ]);
  const r = buildReport(ds);
  const row = (v: string) => r.baseline.find((b) => b.variable === v)!;

  it('randomised counts per arm and in total', () => {
    expect(r.randomised).toEqual({ EPM: 3, EAM: 3, [TOTAL]: 6 });
  });

  it('[derived] age mean (SD): EPM 40.0 (10.0), EAM 40.0 (28.3) with one missing, total 40.0 (15.8)', () => {
    const age = row('age');
    if (age.kind !== 'continuous') throw new Error('age should be continuous');
    expect(age.summary).toBe('mean_sd');
    expect(age.cells.EPM).toMatchObject({ n: 3, missing: 0, mean: 40, sd: 10, text: '40.0 (10.0)' });
    expect(age.cells.EAM.sd).toBeCloseTo(Math.sqrt(800), 12);
    expect(age.cells.EAM).toMatchObject({ n: 2, missing: 1, mean: 40, text: '40.0 (28.3)' });
    // Total: 30, 40, 50, 20, 60 → mean 40, SD √(1000/4).
    expect(age.cells[TOTAL].sd).toBeCloseTo(Math.sqrt(250), 12);
    expect(age.cells[TOTAL].text).toBe('40.0 (15.8)');
  });

  it('[derived] days from injury to repair, median [IQR] (type 7): EPM 0, 1, 3 → 1.0 [0.5, 2.0]; UTC calendar days across February', () => {
    const d = row('days_injury_to_repair');
    if (d.kind !== 'continuous') throw new Error('days should be continuous');
    expect(d.summary).toBe('median_iqr');
    expect(d.cells.EPM).toMatchObject({ n: 3, median: 1, q1: 0.5, q3: 2, text: '1.0 [0.5, 2.0]' });
    expect(d.cells.EAM).toMatchObject({ n: 1, missing: 2, median: 2, text: '2.0 [2.0, 2.0]' });
  });

  it('[derived] sex n (%) with the known values as denominator; missing counted apart', () => {
    const s = row('sex');
    if (s.kind !== 'categorical') throw new Error('sex should be categorical');
    const f = s.levels.find((l) => l.code === 'F')!;
    const m = s.levels.find((l) => l.code === 'M')!;
    expect(f.cells.EPM).toMatchObject({ count: 1, denominator: 3, text: '1 (33.3 %)' });
    expect(m.cells.EPM.text).toBe('2 (66.7 %)');
    expect(f.cells.EAM).toMatchObject({ count: 2, denominator: 2, text: '2 (100.0 %)' });
    expect(f.cells[TOTAL].text).toBe('3 (60.0 %)');
    expect(s.missing).toEqual({ EPM: 0, EAM: 1, [TOTAL]: 1 });
    // Levels nobody has (unknown, undifferentiated) are not listed.
    expect(s.levels.map((l) => l.code)).toEqual(['F', 'M']);
  });

  it('[derived] dominant hand injured: same side → yes, other side → no, ambidextrous apart; needs both forms', () => {
    const d = row('dominant_hand_injured');
    if (d.kind !== 'categorical') throw new Error('categorical expected');
    const count = (code: string, g: string) => d.levels.find((l) => l.code === code)?.cells[g].count;
    expect([count('yes', 'EPM'), count('no', 'EPM'), count('ambidextrous', 'EPM')]).toEqual([1, 1, 1]);
    expect([count('yes', 'EAM'), count('no', 'EAM')]).toEqual([1, 0]);
    expect(d.missing.EAM).toBe(2);
  });

  it('[derived] repaired fingers (derived count, else the rows) and zone (one zone, or more than one)', () => {
    const f = row('repaired_fingers');
    const z = row('zone');
    if (f.kind !== 'categorical' || z.kind !== 'categorical') throw new Error('categorical expected');
    expect(f.levels.find((l) => l.code === '1')!.cells.EPM.count).toBe(2);
    expect(f.levels.find((l) => l.code === '2+')!.cells.EPM.count).toBe(1);
    expect(z.levels.find((l) => l.code === 'II')!.cells.EPM.count).toBe(2);
    expect(z.levels.find((l) => l.code === 'mixed')!.cells.EPM.count).toBe(1);
    expect(z.levels.find((l) => l.code === 'I')!.cells.EAM.count).toBe(1);
    const diab = row('diabetes');
    if (diab.kind !== 'categorical') throw new Error('categorical expected');
    expect(diab.levels.find((l) => l.code === 'Y')!.cells[TOTAL].text).toBe('1 (20.0 %)');
  });

  it('a code outside the code list still appears under its code', () => {
    const odd = buildReport(dataset([participant('X-1', 'EPM', [baseline(30, 'X')])]));
    const s = odd.baseline.find((b) => b.variable === 'sex')!;
    if (s.kind !== 'categorical') throw new Error('categorical expected');
    expect(s.levels.find((l) => l.code === 'X')!.cells.EPM.count).toBe(1);
  });
});

describe('missing data and the unblinded list', () => {
  const lost: ReportRecord = { formKey: 'end_of_participation', visitKey: '', data: { DSDECOD: 'lost_to_follow_up', DSSTDAT: '2026-04-01' } };
  const stopped: ReportRecord = { formKey: 'end_of_participation', visitKey: '', data: { DSDECOD: 'discontinued_intervention', DSSTDAT: '2026-04-01' } };
  const ds = dataset([
    participant('M-01', 'EPM', [followUp('week12', 75, 20)]),
    participant('M-02', 'EPM', [followUp('week12', 80, 30)], { unblinded: true, unblindedAt: '2026-05-01T10:00:00.000Z' }),
    participant('M-03', 'EPM', [lost]), // nothing after baseline
    participant('M-04', 'EPM', [rupture()]), // rupture known, no week-12 visit
    participant('M-05', 'EAM', [followUp('week12', 70, null)]), // QuickDASH not calculable
    participant('M-06', 'EAM', [followUp('week26', 88, 10), stopped]), // only the week-26 visit
    participant('M-07', 'EAM', [followUp('week12', 90, 5)]),
    participant('M-00', 'EAM', [followUp('week12', 60, 40)], { unblinded: true, unblindedAt: '2026-03-01T08:00:00.000Z' }),
    participant('M-99', 'XYZ', [followUp('week12', 10, 10)]),
  ]);
  const r = buildReport(ds);
  const miss = (outcome: string, arm: string) => r.missing.find((m) => m.outcome === outcome)!.byArm.find((a) => a.arm === arm)!;

  it('[derived] primary outcome missing: EPM 2 of 4 (one lost to follow-up), EAM 1 of 4 (seen at week 26 only)', () => {
    expect(miss('tam_pct_other_hand', 'EPM')).toEqual({ arm: 'EPM', randomised: 4, observed: 2, missing: 2, pctMissing: '50.0', endedEarly: 1 });
    // Stopping the programme is not leaving follow-up.
    expect(miss('tam_pct_other_hand', 'EAM')).toEqual({ arm: 'EAM', randomised: 4, observed: 3, missing: 1, pctMissing: '25.0', endedEarly: 0 });
    expect(r.primary.byArm.map((a) => [a.n, a.missing])).toEqual([[2, 2], [3, 1]]);
  });

  it('[derived] QuickDASH missing adds the not-calculable score; rupture is known from an event or a visit at week 12 or later', () => {
    expect(miss('quickdash', 'EAM')).toMatchObject({ observed: 2, missing: 2 });
    expect(miss('tendon_rupture', 'EPM')).toMatchObject({ observed: 3, missing: 1, endedEarly: 1 });
    expect(miss('tendon_rupture', 'EAM')).toMatchObject({ observed: 4, missing: 0 });
    expect(ruptureValue(ds.participants[3])).toBe(true);
    expect(ruptureValue(ds.participants[5])).toBe(false);
    expect(ruptureValue(ds.participants[2])).toBeNull();
  });

  it('the unblinded participants are flagged in a list sorted by study ID, with arm and time', () => {
    expect(r.unblinded).toEqual([
      { subjectCode: 'M-00', site: 'HHC', arm: 'EAM', unblindedAt: '2026-03-01T08:00:00.000Z' },
      { subjectCode: 'M-02', site: 'HHC', arm: 'EPM', unblindedAt: '2026-05-01T10:00:00.000Z' },
    ]);
  });

  it('a participant whose arm is not one of the study’s arms is left out and reported', () => {
    expect(r.excluded).toEqual([{ subjectCode: 'M-99', reason: "arm XYZ is not one of the study's arms" }]);
    expect(r.randomised[TOTAL]).toBe(8);
  });

  it('too few values for a test give no comparison and say why, instead of a number', () => {
    const small = buildReport(dataset([participant('S-1', 'EPM', [followUp('week12', 70, 10)]), participant('S-2', 'EAM', [followUp('week12', 80, 20)])]));
    expect(small.primary.comparison).toBeNull();
    expect(small.primary.note).toMatch(/at least 2 values/);
    // One value per arm is enough for a rank-sum test (exact p = 1 for W = 1 of 1·1).
    expect(small.secondary.quickdash.comparison!.p).toBe(1);
    const three = buildReport(dataset([], [...ARMS, { code: 'X', label: 'Third' }]));
    expect(three.primary.note).toBe('Comparisons need exactly two arms.');
    expect(three.secondary.rupture.comparison).toBeNull();
  });
});

describe('formatting helpers', () => {
  it('p-values: 3 decimals, and "< 0.001" below that (§4.1: small p must not print as 0)', () => {
    expect(formatP(0.0793941403537773)).toBe('0.079');
    expect(formatP(0.0009999)).toBe('< 0.001');
    expect(formatP(0.001)).toBe('0.001');
    expect(formatP(1.8552818324781067e-5)).toBe('< 0.001'); // R-T5 p
    expect(formatP(0)).toBe('< 0.001');
    expect(formatP(1)).toBe('1.000');
    expect(formatP(Number.NaN)).toBe('\u2014');
    expect(formatPStatement(0.0004)).toBe('p < 0.001');
    expect(formatPStatement(0.25)).toBe('p = 0.250');
  });

  it('numbers: fixed decimals, a true minus sign, no sign on a rounded zero', () => {
    expect(formatNumber(-1.58, 2)).toBe('\u22121.58');
    expect(formatNumber(-0.04, 1)).toBe('0.0');
    expect(formatNumber(2.345, 0)).toBe('2');
    expect(formatNumber(null)).toBe('\u2014');
    expect(formatCI([-3.3654832103645944, 0.20548321036459538], 2)).toBe('\u22123.37 to 0.21');
    expect(formatMeanSd(40, null)).toBe('40.0 (\u2014)');
    expect(formatMedianIqr(1, 0.5, 2, 1)).toBe('1.0 [0.5, 2.0]');
    expect(formatCountPct(1, 3)).toBe('1 (33.3 %)');
    expect(formatCountPct(0, 0)).toBe('0');
  });
});
