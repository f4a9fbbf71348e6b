/**
 * Trial report tables computed from a plain dataset: baseline characteristics by arm, the primary outcome (TAM
 * of the repaired finger as % of the other hand at week 12, Welch), secondary outcomes (QuickDASH at week 12 with
 * Mann–Whitney; tendon rupture with Newcombe's interval for the risk difference and Fisher's exact test), missing
 * data per outcome and arm, and the list of participants whose allocation was unblinded.
 *
 * Pure: no I/O. The dataset comes from `lib/report/dataset.ts` (a locked snapshot once it exists). Statistics are
 * unrounded; every `text` field is rounded for display with `lib/report/format.ts`.
 *
 * Conventions (state them in the report):
 * - Analysis by randomised arm; participants are counted in the arm they were allocated to.
 * - Comparisons are the second arm minus the first (the first arm in the study configuration is the reference):
 *   for TEMPO-FT EAM − EPM.
 * - The primary value of a participant is the mean over the repaired fingers of TAM as % of the same finger of the
 *   other hand (against the 260° norm when that finger was not measured, as the follow-up derivation does).
 * - Tendon rupture: any adverse event of kind "tendon rupture" up to the data cut. A participant without one counts
 *   as "no rupture" only when followed up at the primary visit or later; otherwise the outcome is missing.
 */
import { fisherExact, mannWhitney, oneSampleTTest, quantile, riskDifferenceCI, welchTTest } from '@/lib/stats';
import { deriveFollowUp } from '@/lib/crf/follow-up';
import { DASH, formatCI, formatCountPct, formatFraction, formatMeanSd, formatMedianIqr, formatNumber, formatPStatement, formatPercent } from './format';

// ---------------------------------------------------------------------------
// The dataset
// ---------------------------------------------------------------------------

/** One submitted CRF record: entered items with the server's derived items merged in (`derived_scores`, `n_injured_fingers`). */
export interface ReportRecord {
  formKey: string;
  /** Visit key of the schedule ('week12'), or '' for forms outside the schedule (operation, adverse events). */
  visitKey: string;
  data: Record<string, unknown>;
}

/** A randomised participant. */
export interface ReportParticipant {
  subjectCode: string;
  /** Site code, e.g. HHC. */
  site: string;
  /** Arm code of the allocation, e.g. EPM. */
  arm: string;
  /** True when the allocation was revealed (emergency unblinding). */
  unblinded: boolean;
  /** When it was first revealed (ISO 8601), if known. */
  unblindedAt?: string | null;
  records: ReportRecord[];
}

export interface ReportArm {
  code: string;
  label: string;
}

/** Everything a trial report is computed from. */
export interface ReportDataset {
  study: { code: string; title: string };
  /** Arms in the study's order; the first is the reference of every comparison. */
  arms: ReportArm[];
  /** Where the data came from: the live database (provisional) or a locked snapshot (final). */
  source: { kind: 'live' | 'snapshot'; asOf: string; label: string };
  participants: ReportParticipant[];
}

export interface ReportOptions {
  /** Visit key of the primary time point. Default 'week12'. */
  primaryVisit?: string;
  /** Visits at or after the primary one, whose follow-up establishes "no rupture". Default ['week12', 'week26']. */
  ascertainmentVisits?: string[];
}

// ---------------------------------------------------------------------------
// The report
// ---------------------------------------------------------------------------

/** A column of the tables: an arm code, or 'total'. */
export type Group = string;
export const TOTAL = 'total';

export interface ContinuousCell {
  n: number;
  missing: number;
  mean: number | null;
  sd: number | null;
  median: number | null;
  q1: number | null;
  q3: number | null;
  text: string;
}

export interface CategoryCell {
  count: number;
  /** Participants with a known value in this column. */
  denominator: number;
  pct: number | null;
  text: string;
}

export type BaselineRow =
  | { variable: string; label: string; kind: 'continuous'; summary: 'mean_sd' | 'median_iqr'; cells: Record<Group, ContinuousCell> }
  | { variable: string; label: string; kind: 'categorical'; summary: 'n_pct'; levels: { code: string; label: string; cells: Record<Group, CategoryCell> }[]; missing: Record<Group, number> };

export interface ArmContinuous {
  arm: string;
  n: number;
  missing: number;
  mean: number | null;
  sd: number | null;
  median: number | null;
  q1: number | null;
  q3: number | null;
  /** t interval for the arm's mean (needs 2 or more non-identical values). */
  meanCI95: [number, number] | null;
  text: string;
}

export interface PrimaryOutcome {
  key: 'tam_pct_other_hand';
  label: string;
  visit: string;
  byArm: ArmContinuous[];
  comparison: { contrast: string; method: string; estimate: number; ci95: [number, number]; t: number; df: number; p: number; text: string } | null;
  /** Why there is no comparison, when there is none. */
  note: string | null;
  /** Individual values by arm, for the chart. */
  points: { arm: string; value: number }[];
}

export interface QuickDashOutcome {
  key: 'quickdash';
  label: string;
  visit: string;
  byArm: ArmContinuous[];
  comparison: { contrast: string; method: string; W: number; p: number; exact: boolean; text: string } | null;
  note: string | null;
}

export interface RuptureOutcome {
  key: 'tendon_rupture';
  label: string;
  byArm: { arm: string; events: number; n: number; missing: number; proportion: number | null; text: string }[];
  comparison: { contrast: string; method: string; riskDifference: number; ci95: [number, number]; p: number; text: string } | null;
  note: string | null;
}

export interface MissingRow {
  outcome: string;
  label: string;
  byArm: { arm: string; randomised: number; observed: number; missing: number; pctMissing: string; endedEarly: number }[];
}

export interface TrialReport {
  study: { code: string; title: string };
  source: ReportDataset['source'];
  arms: ReportArm[];
  /** Randomised participants per column. */
  randomised: Record<Group, number>;
  baseline: BaselineRow[];
  primary: PrimaryOutcome;
  secondary: { quickdash: QuickDashOutcome; rupture: RuptureOutcome };
  missing: MissingRow[];
  unblinded: { subjectCode: string; site: string; arm: string; unblindedAt: string | null }[];
  /** Participants left out because their arm is not one of the study's arms. */
  excluded: { subjectCode: string; reason: string }[];
}

// ---------------------------------------------------------------------------
// Reading one participant
// ---------------------------------------------------------------------------

const num = (v: unknown): number | null => (typeof v === 'number' && Number.isFinite(v) ? v : null);
const str = (v: unknown): string | null => (typeof v === 'string' && v !== '' ? v : null);

function recordOf(p: ReportParticipant, formKey: string, visitKey?: string): ReportRecord | undefined {
  return p.records.find((r) => r.formKey === formKey && (visitKey === undefined || r.visitKey === visitKey));
}

/** Whole days from one ISO date to another (UTC calendar arithmetic, so no daylight-saving drift). */
function daysBetween(from: string, to: string): number | null {
  const a = Date.parse(`${from}T00:00:00Z`);
  const b = Date.parse(`${to}T00:00:00Z`);
  return Number.isFinite(a) && Number.isFinite(b) ? Math.round((b - a) / 86_400_000) : null;
}

type Scores = { tam_by_finger?: { tam_pct_contralateral?: unknown }[]; quickdash_score?: unknown };

/** The follow-up's derived scores: as stored, or derived again from the raw measures when a dataset carries none. */
function scoresOf(p: ReportParticipant, visitKey: string): Scores | null {
  const fu = recordOf(p, 'follow_up', visitKey);
  if (!fu) return null;
  const stored = fu.data.derived_scores;
  if (stored && typeof stored === 'object') return stored as Scores;
  try {
    return deriveFollowUp(fu.data, recordOf(p, 'operation')?.data ?? null) as Scores;
  } catch {
    return null;
  }
}

/** Mean over the repaired fingers of TAM as % of the other hand, or null. */
export function primaryValue(p: ReportParticipant, visitKey = 'week12'): number | null {
  const fingers = scoresOf(p, visitKey)?.tam_by_finger ?? [];
  const pcts = fingers.map((f) => num(f.tam_pct_contralateral)).filter((x): x is number => x !== null);
  return pcts.length ? pcts.reduce((a, b) => a + b, 0) / pcts.length : null;
}

/** QuickDASH score at the visit (null when not calculable: more than one item missing). */
export function quickDashValue(p: ReportParticipant, visitKey = 'week12'): number | null {
  return num(scoresOf(p, visitKey)?.quickdash_score);
}

/** true: a tendon rupture was reported; false: none, and followed up at an ascertainment visit; null: unknown. */
export function ruptureValue(p: ReportParticipant, ascertainment: readonly string[] = ['week12', 'week26']): boolean | null {
  if (p.records.some((r) => r.formKey === 'adverse_event' && r.data.AECAT === 'tendon_rupture')) return true;
  return p.records.some((r) => r.formKey === 'follow_up' && ascertainment.includes(r.visitKey)) ? false : null;
}

const EARLY_END = new Set(['withdrawn_follow_up', 'withdrew_consent', 'lost_to_follow_up', 'died', 'other']);
/** Whether the participant left follow-up early (end of participation other than completed / programme stopped). */
function endedEarly(p: ReportParticipant): boolean {
  const code = recordOf(p, 'end_of_participation')?.data.DSDECOD;
  return typeof code === 'string' && EARLY_END.has(code);
}

// ---------------------------------------------------------------------------
// Baseline characteristics
// ---------------------------------------------------------------------------

type Getter<T> = (p: ReportParticipant) => T | null;

const SEX = [['F', 'Female'], ['M', 'Male'], ['U', 'Unknown'], ['UNDIFFERENTIATED', 'Undifferentiated']] as const;
const YES_NO = [['Y', 'Yes'], ['N', 'No']] as const;
const DOMINANT = [['yes', 'Yes'], ['no', 'No'], ['ambidextrous', 'Ambidextrous']] as const;
const FINGERS = [['1', '1 finger'], ['2+', '2 or more fingers']] as const;
const ZONES = [['I', 'Zone I'], ['II', 'Zone II'], ['III', 'Zone III'], ['IV', 'Zone IV'], ['V', 'Zone V'], ['mixed', 'More than one zone']] as const;
const OCCUPATION = [
  ['manual_heavy', 'Heavy manual work'], ['manual_light', 'Light manual work'], ['office', 'Office or desk work'], ['student', 'Student'],
  ['not_working', 'Not working'], ['retired', 'Retired'], ['other', 'Other'],
] as const;
const SMOKING = [['never', 'Never smoked'], ['former', 'Former smoker'], ['current', 'Current smoker']] as const;

const baselineItem = (key: string): Getter<unknown> => (p) => recordOf(p, 'baseline')?.data[key] ?? null;
const fingerRows = (p: ReportParticipant) => {
  const f = recordOf(p, 'operation')?.data.fingers;
  return Array.isArray(f) ? (f as { zone?: unknown }[]) : null;
};

const CONTINUOUS: { variable: string; label: string; summary: 'mean_sd' | 'median_iqr'; dp: number; get: Getter<number> }[] = [
  { variable: 'age', label: 'Age (years)', summary: 'mean_sd', dp: 1, get: (p) => num(baselineItem('AGE')(p)) },
  {
    variable: 'days_injury_to_repair', label: 'Days from injury to repair', summary: 'median_iqr', dp: 1,
    get: (p) => {
      const op = recordOf(p, 'operation')?.data;
      const inj = str(op?.INJDAT);
      const rep = str(op?.REPDAT);
      return inj && rep ? daysBetween(inj, rep) : null;
    },
  },
];

const CATEGORICAL: { variable: string; label: string; levels: readonly (readonly [string, string])[]; get: Getter<string> }[] = [
  { variable: 'sex', label: 'Sex', levels: SEX, get: (p) => str(baselineItem('SEX')(p)) },
  {
    variable: 'dominant_hand_injured', label: 'Dominant hand injured', levels: DOMINANT,
    get: (p) => {
      const dom = str(baselineItem('hand_dominance')(p));
      const hand = str(recordOf(p, 'operation')?.data.hand);
      if (dom === 'ambidextrous') return 'ambidextrous';
      return dom && hand ? (dom === hand ? 'yes' : 'no') : null;
    },
  },
  {
    variable: 'repaired_fingers', label: 'Repaired fingers', levels: FINGERS,
    get: (p) => {
      const n = num(recordOf(p, 'operation')?.data.n_injured_fingers) ?? fingerRows(p)?.length ?? null;
      return n === null || n < 1 ? null : n === 1 ? '1' : '2+';
    },
  },
  {
    variable: 'zone', label: 'Flexor zone of the repair', levels: ZONES,
    get: (p) => {
      const zones = new Set((fingerRows(p) ?? []).map((f) => str(f.zone)).filter((z): z is string => z !== null));
      return zones.size === 0 ? null : zones.size === 1 ? [...zones][0] : 'mixed';
    },
  },
  { variable: 'occupation', label: 'Main occupation', levels: OCCUPATION, get: (p) => str(baselineItem('occupation')(p)) },
  { variable: 'smoking', label: 'Smoking', levels: SMOKING, get: (p) => str(baselineItem('smoking')(p)) },
  { variable: 'diabetes', label: 'Diabetes', levels: YES_NO, get: (p) => str(baselineItem('diabetes')(p)) },
];

/** n, mean, SD, median and type-7 quartiles of possibly few values (SD needs two). */
function summarise(values: number[], missing: number, summary: 'mean_sd' | 'median_iqr', dp: number): ContinuousCell {
  if (values.length === 0) return { n: 0, missing, mean: null, sd: null, median: null, q1: null, q3: null, text: DASH };
  const mean = values.reduce((a, b) => a + b, 0) / values.length;
  // Two-pass variance (the one-pass formula loses digits on values far from 0).
  const sd = values.length > 1 ? Math.sqrt(values.reduce((a, v) => a + (v - mean) ** 2, 0) / (values.length - 1)) : null;
  const [q1, median, q3] = quantile(values, [0.25, 0.5, 0.75]);
  const text = summary === 'mean_sd' ? formatMeanSd(mean, sd, dp) : formatMedianIqr(median, q1, q3, dp);
  return { n: values.length, missing, mean, sd, median, q1, q3, text };
}

function columns(arms: ReportArm[], participants: ReportParticipant[]): [Group, ReportParticipant[]][] {
  return [...arms.map((a): [Group, ReportParticipant[]] => [a.code, participants.filter((p) => p.arm === a.code)]), [TOTAL, participants]];
}

/** Baseline characteristics by arm and in total: mean (SD) or median [IQR] for continuous items, n (%) for categories. */
export function baselineTable(arms: ReportArm[], participants: ReportParticipant[]): BaselineRow[] {
  const cols = columns(arms, participants);
  const rows: BaselineRow[] = [];
  for (const c of CONTINUOUS) {
    const cells: Record<Group, ContinuousCell> = {};
    for (const [g, ps] of cols) {
      const vals = ps.map(c.get).filter((v): v is number => v !== null);
      cells[g] = summarise(vals, ps.length - vals.length, c.summary, c.dp);
    }
    rows.push({ variable: c.variable, label: c.label, kind: 'continuous', summary: c.summary, cells });
  }
  for (const c of CATEGORICAL) {
    const known = new Map(cols.map(([g, ps]) => [g, ps.map(c.get).filter((v): v is string => v !== null)]));
    // Levels outside the code list still appear (under their code) rather than vanish from the counts.
    const extra = [...new Set([...known.get(TOTAL)!].filter((v) => !c.levels.some(([code]) => code === v)))];
    const levels = [...c.levels, ...extra.map((v) => [v, v] as const)]
      // A level nobody has is left out unless it is one of the first two (Yes/No, Female/Male …).
      .filter(([code], i) => i < 2 || known.get(TOTAL)!.includes(code))
      .map(([code, label]) => ({
        code,
        label,
        cells: Object.fromEntries(
          cols.map(([g]) => {
            const vals = known.get(g)!;
            const count = vals.filter((v) => v === code).length;
            return [g, { count, denominator: vals.length, pct: vals.length ? (100 * count) / vals.length : null, text: formatCountPct(count, vals.length) }];
          }),
        ),
      }));
    const missing = Object.fromEntries(cols.map(([g, ps]) => [g, ps.length - known.get(g)!.length]));
    rows.push({ variable: c.variable, label: c.label, kind: 'categorical', summary: 'n_pct', levels, missing });
  }
  return rows;
}

// ---------------------------------------------------------------------------
// Outcomes
// ---------------------------------------------------------------------------

function armContinuous(arm: string, values: number[], missing: number, summary: 'mean_sd' | 'median_iqr', dp: number): ArmContinuous {
  const s = summarise(values, missing, summary, dp);
  let meanCI95: [number, number] | null = null;
  try {
    if (values.length >= 2) meanCI95 = oneSampleTTest(values).ci95;
  } catch {
    meanCI95 = null; // constant values: no interval
  }
  return { arm, n: s.n, missing, mean: s.mean, sd: s.sd, median: s.median, q1: s.q1, q3: s.q3, meanCI95, text: s.text };
}

const contrastOf = (arms: ReportArm[]) => `${arms[1].code} \u2212 ${arms[0].code}`;
const TWO_ARMS = 'Comparisons need exactly two arms.';

/** Primary outcome: TAM % of the other hand at the primary visit, mean (SD) by arm, difference of means with Welch's 95 % CI and p. */
export function primaryOutcome(arms: ReportArm[], participants: ReportParticipant[], visit = 'week12'): PrimaryOutcome {
  const points: { arm: string; value: number }[] = [];
  const byArm = arms.map((a) => {
    const ps = participants.filter((p) => p.arm === a.code);
    const vals = ps.map((p) => primaryValue(p, visit)).filter((v): v is number => v !== null);
    for (const value of vals) points.push({ arm: a.code, value });
    return armContinuous(a.code, vals, ps.length - vals.length, 'mean_sd', 1);
  });
  let comparison: PrimaryOutcome['comparison'] = null;
  let note: string | null = null;
  if (arms.length !== 2) note = TWO_ARMS;
  else {
    const [ref, other] = arms.map((a) => points.filter((x) => x.arm === a.code).map((x) => x.value));
    if (ref.length < 2 || other.length < 2) note = 'The Welch t test needs at least 2 values in each arm.';
    else {
      try {
        const r = welchTTest(other, ref);
        comparison = {
          contrast: contrastOf(arms), method: 'Welch two-sample t test', estimate: r.meanDiff, ci95: r.ci95, t: r.t, df: r.df, p: r.p,
          text: `${formatNumber(r.meanDiff, 1)} (95 % CI ${formatCI(r.ci95, 1)}); ${formatPStatement(r.p)}`,
        };
      } catch (e) {
        note = (e as Error).message;
      }
    }
  }
  return { key: 'tam_pct_other_hand', label: 'TAM of the repaired finger(s), % of the other hand', visit, byArm, comparison, note, points };
}

/** QuickDASH at the primary visit: median [IQR] by arm and the Mann–Whitney (Wilcoxon rank-sum) test. */
export function quickDashOutcome(arms: ReportArm[], participants: ReportParticipant[], visit = 'week12'): QuickDashOutcome {
  const values = arms.map((a) => participants.filter((p) => p.arm === a.code).map((p) => quickDashValue(p, visit)));
  const byArm = arms.map((a, i) => {
    const vals = values[i].filter((v): v is number => v !== null);
    return armContinuous(a.code, vals, values[i].length - vals.length, 'median_iqr', 1);
  });
  let comparison: QuickDashOutcome['comparison'] = null;
  let note: string | null = null;
  if (arms.length !== 2) note = TWO_ARMS;
  else {
    const [ref, other] = values.map((v) => v.filter((x): x is number => x !== null));
    if (ref.length < 1 || other.length < 1) note = 'The rank-sum test needs at least 1 value in each arm.';
    else {
      try {
        const r = mannWhitney(other, ref);
        comparison = {
          contrast: contrastOf(arms), method: `Mann\u2013Whitney U (Wilcoxon rank-sum) test, ${r.exact ? 'exact' : 'normal approximation with continuity correction'}`,
          W: r.W, p: r.p, exact: r.exact, text: `W = ${formatNumber(r.W, 1)}; ${formatPStatement(r.p)}`,
        };
      } catch (e) {
        note = (e as Error).message;
      }
    }
  }
  return { key: 'quickdash', label: 'QuickDASH (0 = no disability, 100 = most severe)', visit, byArm, comparison, note };
}

/** Tendon rupture: n/N by arm, risk difference with Newcombe's hybrid score 95 % CI (method 10) and Fisher's exact p. */
export function ruptureOutcome(arms: ReportArm[], participants: ReportParticipant[], ascertainment: readonly string[] = ['week12', 'week26']): RuptureOutcome {
  const byArm = arms.map((a) => {
    const vals = participants.filter((p) => p.arm === a.code).map((p) => ruptureValue(p, ascertainment));
    const known = vals.filter((v): v is boolean => v !== null);
    const events = known.filter(Boolean).length;
    return { arm: a.code, events, n: known.length, missing: vals.length - known.length, proportion: known.length ? events / known.length : null, text: formatFraction(events, known.length) };
  });
  let comparison: RuptureOutcome['comparison'] = null;
  let note: string | null = null;
  if (arms.length !== 2) note = TWO_ARMS;
  else {
    const [ref, other] = byArm;
    if (ref.n < 1 || other.n < 1) note = 'Each arm needs at least one participant with a known outcome.';
    else {
      const rd = riskDifferenceCI(other.events, other.n, ref.events, ref.n);
      const { p } = fisherExact([[other.events, other.n - other.events], [ref.events, ref.n - ref.events]]);
      comparison = {
        contrast: contrastOf(arms), method: "Risk difference with Newcombe's hybrid score interval; Fisher's exact test",
        riskDifference: rd.diff, ci95: [rd.lower, rd.upper], p,
        text: `${formatNumber(100 * rd.diff, 1)} percentage points (95 % CI ${formatCI([100 * rd.lower, 100 * rd.upper], 1)}); ${formatPStatement(p)}`,
      };
    }
  }
  return { key: 'tendon_rupture', label: 'Tendon rupture', byArm, comparison, note };
}

/** Missing outcome data by arm: randomised, observed, missing (and how many of those left follow-up early). */
export function missingTable(arms: ReportArm[], participants: ReportParticipant[], visit = 'week12', ascertainment: readonly string[] = ['week12', 'week26']): MissingRow[] {
  const outcomes: { outcome: string; label: string; known: (p: ReportParticipant) => boolean }[] = [
    { outcome: 'tam_pct_other_hand', label: 'TAM % of the other hand (primary)', known: (p) => primaryValue(p, visit) !== null },
    { outcome: 'quickdash', label: 'QuickDASH', known: (p) => quickDashValue(p, visit) !== null },
    { outcome: 'tendon_rupture', label: 'Tendon rupture', known: (p) => ruptureValue(p, ascertainment) !== null },
  ];
  return outcomes.map((o) => ({
    outcome: o.outcome,
    label: o.label,
    byArm: arms.map((a) => {
      const ps = participants.filter((p) => p.arm === a.code);
      const missed = ps.filter((p) => !o.known(p));
      return { arm: a.code, randomised: ps.length, observed: ps.length - missed.length, missing: missed.length, pctMissing: formatPercent(missed.length, ps.length), endedEarly: missed.filter(endedEarly).length };
    }),
  }));
}

/** Participants whose allocation was revealed, flagged for the report (sorted by study ID). */
export function unblindedList(participants: ReportParticipant[]) {
  return participants
    .filter((p) => p.unblinded)
    .map((p) => ({ subjectCode: p.subjectCode, site: p.site, arm: p.arm, unblindedAt: p.unblindedAt ?? null }))
    .sort((a, b) => a.subjectCode.localeCompare(b.subjectCode));
}

/** The whole report from a dataset. */
export function buildReport(ds: ReportDataset, opts: ReportOptions = {}): TrialReport {
  const visit = opts.primaryVisit ?? 'week12';
  const ascertainment = opts.ascertainmentVisits ?? ['week12', 'week26'];
  const codes = new Set(ds.arms.map((a) => a.code));
  const excluded = ds.participants.filter((p) => !codes.has(p.arm)).map((p) => ({ subjectCode: p.subjectCode, reason: `arm ${p.arm || '(none)'} is not one of the study's arms` }));
  const ps = ds.participants.filter((p) => codes.has(p.arm));
  return {
    study: ds.study,
    source: ds.source,
    arms: ds.arms,
    randomised: Object.fromEntries(columns(ds.arms, ps).map(([g, list]) => [g, list.length])),
    baseline: baselineTable(ds.arms, ps),
    primary: primaryOutcome(ds.arms, ps, visit),
    secondary: { quickdash: quickDashOutcome(ds.arms, ps, visit), rupture: ruptureOutcome(ds.arms, ps, ascertainment) },
    missing: missingTable(ds.arms, ps, visit, ascertainment),
    unblinded: unblindedList(ps),
    excluded,
  };
}
