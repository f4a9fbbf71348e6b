import 'server-only';
import { QueryTypes } from 'sequelize';
import { sequelize } from '@/models';
import { DEFAULT_MISSED_AFTER_DAYS } from '@/lib/schedule';
import { todayIn } from '@/lib/dates';
import type { Role } from '@/lib/roles';
import { consortCounts, consortSvg, type ConsortFact } from './consort';
import { cumulativeByMonth, plannedLine, projectTargetDate } from './projection';
import { isBlinded } from '@/lib/crf/access';
import { wilsonCI } from '@/lib/stats';
import { isLockedForAnalysis } from '@/lib/lock';

type StudyLike = { id: number; config: Record<string, unknown> };

/** Whether these roles may see monitoring by arm before lock (only roles the study names; none by default). */
export function armLevelAllowed(study: StudyLike, roles: Role[]): boolean {
  const allowed = (study.config.armLevelMonitoringRoles as Role[] | undefined) ?? [];
  return roles.some((r) => allowed.includes(r));
}

/** Screening outcomes that exclude a person before randomisation (CONSORT: not meeting criteria, declined, other). */
const EXCLUDED = ['not_eligible', 'declined', 'other'];

const END_STATUSES = new Set(['completed', 'discontinued_intervention', 'withdrawn_follow_up', 'withdrew_consent', 'lost_to_follow_up', 'died', 'other']);

/**
 * The investigator's dashboard for a study (or the given sites): recruitment against target, the screening funnel,
 * a projected date to reach the target, follow-up completeness per visit, open queries, AE and SAE counts, and the
 * CONSORT flow. Pooled over arms unless the study allows these roles to see arms, or the study is hard-locked.
 */
export async function dashboard(study: StudyLike, siteIds: number[] | 'all', roles: Role[], now = new Date()) {
  // After the study's hard lock the allocation is revealed for analysis, so everyone sees arms and blinding integrity.
  const only = siteIds === 'all' ? null : siteIds.length ? siteIds : [0];
  const [locked, siteRows] = await Promise.all([
    isLockedForAnalysis(study.id),
    sequelize.query<{ id: number; code: string; name: string; time_zone: string; recruitment_target: number }>(
      `SELECT id, code, name, time_zone, recruitment_target FROM sites WHERE study_id = ?${only ? ` AND id IN (${only.map(() => '?').join(',')})` : ''} ORDER BY code`,
      { replacements: [study.id, ...(only ?? [])], type: QueryTypes.SELECT },
    ),
  ]);
  const sites = siteRows.map((s) => ({ id: Number(s.id), code: s.code, name: s.name, timeZone: s.time_zone, recruitmentTarget: Number(s.recruitment_target) }));
  const byArm = locked || armLevelAllowed(study, roles);
  const today = todayIn(sites[0]?.timeZone ?? 'UTC', now);
  const inSites = sites.length ? sites.map((s) => s.id) : [0];
  const marks = inSites.map(() => '?').join(',');
  const q = <T extends object>(sql: string, replacements: unknown[]) => sequelize.query<T>(sql, { replacements, type: QueryTypes.SELECT });
  // The counts are made by MariaDB wherever one row per participant is not needed: participants by site and screening
  // outcome (the excluded also by their list of reasons), consents by site, visits by visit and status.
  // The randomised participants (at most the target) come back one by one, with the few facts of their records the
  // CONSORT flow and blinding integrity need; the counts of everyone else are the totals less theirs.
  const [groups, consentedBySite, excludedGroups, randomised, records, visitCounts, adverseEvents, queryAges, saes] = await Promise.all([
    q<{ site_id: number; screening_outcome: string; n: number | bigint }>(
      `SELECT site_id, screening_outcome, COUNT(*) AS n FROM participants WHERE study_id = ? AND site_id IN (${marks}) GROUP BY site_id, screening_outcome`,
      [study.id, ...inSites],
    ),
    q<{ site_id: number; n: number | bigint }>(
      `SELECT site_id, COUNT(DISTINCT participant_id) AS n FROM crf_records
        WHERE study_id = ? AND site_id IN (${marks}) AND form_key = 'consent' AND status = 'submitted' GROUP BY site_id`,
      [study.id, ...inSites],
    ),
    // The excluded by outcome and list of reasons (a person counts once under each of their reasons).
    q<{ screening_outcome: string; screening_reasons: string | string[] | null; n: number | bigint }>(
      `SELECT screening_outcome, screening_reasons, COUNT(*) AS n FROM participants
        WHERE study_id = ? AND site_id IN (${marks}) AND screening_outcome IN (${EXCLUDED.map(() => '?').join(',')})
        GROUP BY screening_outcome, screening_reasons`,
      [study.id, ...inSites, ...EXCLUDED],
    ),
    q<{ id: number; site_id: number; screening_outcome: string; screening_reasons: string | string[] | null; arm: string; allocated_on: string }>(
      `SELECT p.id, p.site_id, p.screening_outcome, p.screening_reasons, a.arm, DATE_FORMAT(a.allocated_at, '%Y-%m-%d') AS allocated_on
         FROM allocations a JOIN participants p ON p.id = a.participant_id
        WHERE a.study_id = ? AND a.site_id IN (${marks})
        ORDER BY p.id`,
      [study.id, ...inSites],
    ),
    // Of the randomised participants' records only what the counts need: the whole end-of-participation document
    // (status and reason), the assessor's guess taken out of the follow-up by MariaDB, the other forms by presence.
    q<{ participant_id: number; form_key: string; visit_key: string; eop: string | Record<string, unknown> | null; guess: string | null }>(
      `SELECT r.participant_id, r.form_key, r.visit_key,
              CASE WHEN r.form_key = 'end_of_participation' THEN r.data END AS eop,
              CASE WHEN r.form_key = 'follow_up' THEN JSON_UNQUOTE(JSON_EXTRACT(r.data, '$.guess_arm')) END AS guess
         FROM crf_records r JOIN allocations a ON a.participant_id = r.participant_id
        WHERE r.study_id = ? AND r.site_id IN (${marks}) AND r.status = 'submitted'
          AND r.form_key IN ('end_of_participation', 'therapy_session', 'follow_up')
        ORDER BY r.id`,
      [study.id, ...inSites],
    ),
    // Follow-up completeness per visit. The status rules are visitStatus's (lib/schedule), written for MariaDB;
    // tests/monitoring/simulation.test.ts checks both give the same counts.
    q<{ visit_key: string; label: string; done: number | string; done_out: number | string; upcoming: number | string; open: number | string; overdue: number | string; missed: number | string }>(
      `SELECT visit_key, MIN(label) AS label,
              SUM(completed_on IS NOT NULL AND completed_on BETWEEN earliest AND latest) AS done,
              SUM(completed_on IS NOT NULL AND NOT (completed_on BETWEEN earliest AND latest)) AS done_out,
              SUM(completed_on IS NULL AND ? < earliest) AS upcoming,
              SUM(completed_on IS NULL AND ? BETWEEN earliest AND latest) AS open,
              SUM(completed_on IS NULL AND ? > latest AND DATEDIFF(?, latest) <= ?) AS overdue,
              SUM(completed_on IS NULL AND DATEDIFF(?, latest) > ?) AS missed
         FROM visits WHERE study_id = ? AND site_id IN (${marks})
        GROUP BY visit_key ORDER BY MIN(id)`,
      [today, today, today, today, DEFAULT_MISSED_AFTER_DAYS, today, DEFAULT_MISSED_AFTER_DAYS, study.id, ...inSites],
    ),
    q<{ n: number | bigint }>(`SELECT COUNT(*) AS n FROM crf_records WHERE study_id = ? AND site_id IN (${marks}) AND status = 'submitted' AND form_key = 'adverse_event'`, [study.id, ...inSites]),
    // Open queries by site and age (under 7 days, 7 to 30, over 30), and SAEs by follow-up state, as of `now`.
    q<{ site_id: number; total: number | bigint; under7: number | string; from7to30: number | string; over30: number | string }>(
      `SELECT site_id, COUNT(*) AS total, SUM(created_at > ? - INTERVAL 7 DAY) AS under7,
              SUM(created_at <= ? - INTERVAL 7 DAY AND created_at >= ? - INTERVAL 30 DAY) AS from7to30, SUM(created_at < ? - INTERVAL 30 DAY) AS over30
         FROM queries WHERE study_id = ? AND site_id IN (${marks}) AND state <> 'closed' GROUP BY site_id`,
      [now, now, now, now, study.id, ...inSites],
    ),
    q<{ serious: number | bigint; awaiting: number | string | null; overdue: number | string | null }>(
      `SELECT COUNT(*) AS serious, SUM(followed_up_at IS NULL AND deadline_at >= ?) AS awaiting, SUM(followed_up_at IS NULL AND deadline_at < ?) AS overdue
         FROM sae_reports WHERE study_id = ? AND site_id IN (${marks})`,
      [now, now, study.id, ...inSites],
    ),
  ]);
  const reasonsOf = (v: string | string[] | null): string[] | null => (typeof v === 'string' ? JSON.parse(v) : v);
  const allocBy = new Map(randomised.map((p) => [Number(p.id), { arm: p.arm }]));
  // Which forms (and form@visit) each randomised participant has, so every look-up is constant time.
  const present = new Set<string>();
  const endOf = new Map<number, Record<string, unknown>>();
  const guesses: { participantId: number; formKey: string; data: Record<string, unknown> }[] = [];
  for (const r of records) {
    const pid = Number(r.participant_id);
    present.add(`${pid}|${r.form_key}`);
    present.add(`${pid}|${r.form_key}|${r.visit_key}`);
    if (r.form_key === 'end_of_participation' && r.eop && !endOf.has(pid)) endOf.set(pid, typeof r.eop === 'string' ? JSON.parse(r.eop) : r.eop);
    if (r.form_key === 'follow_up') guesses.push({ participantId: pid, formKey: 'follow_up', data: r.guess === null ? {} : { guess_arm: r.guess } });
  }
  const has = (pid: number, form: string, visit?: string) => present.has(visit === undefined ? `${pid}|${form}` : `${pid}|${form}|${visit}`);

  const recruitment = sites.map((s) => {
    const gs = groups.filter((g) => Number(g.site_id) === s.id);
    const n = (f: (g: (typeof gs)[number]) => boolean) => gs.reduce((a, g) => a + (f(g) ? Number(g.n) : 0), 0);
    return {
      site: s.code, name: s.name, target: s.recruitmentTarget, screened: n(() => true), eligible: n((g) => g.screening_outcome === 'eligible'),
      consented: Number(consentedBySite.find((c) => Number(c.site_id) === s.id)?.n ?? 0),
      randomised: randomised.filter((p) => Number(p.site_id) === s.id).length,
    };
  });
  const sum = (k: 'target' | 'screened' | 'eligible' | 'consented' | 'randomised') => recruitment.reduce((a, r) => a + r[k], 0);
  const reasons = new Map<string, number>();
  const countReasons = (outcome: string, rs: string[] | null, n: number) => {
    if (outcome === 'not_eligible') for (const r of rs ?? []) reasons.set(r, (reasons.get(r) ?? 0) + n);
  };
  for (const g of excludedGroups) countReasons(g.screening_outcome, reasonsOf(g.screening_reasons), Number(g.n));

  const dates = randomised.map((p) => p.allocated_on).filter((d) => d <= today);
  const projection = projectTargetDate({ randomisedDates: dates, target: sum('target'), today });
  const recruitmentChart = recruitmentByMonth(study, dates, sum('target'), today);

  const completeness = visitCounts.map((v) => ({
    key: v.visit_key, label: v.label, inWindow: Number(v.done), outOfWindow: Number(v.done_out), overdue: Number(v.overdue), missed: Number(v.missed), open: Number(v.open), upcoming: Number(v.upcoming),
  }));

  const openQueries = sites.map((s) => {
    const a = queryAges.find((x) => Number(x.site_id) === s.id);
    return { site: s.code, total: Number(a?.total ?? 0), under7: Number(a?.under7 ?? 0), from7to30: Number(a?.from7to30 ?? 0), over30: Number(a?.over30 ?? 0) };
  });

  const excluded = (outcome: string, rs: string[] | null) => (EXCLUDED.includes(outcome) ? rs ?? [] : []);
  const facts: ConsortFact[] = [];
  const fact = (outcome: string, rs: string[] | null): ConsortFact => ({
    screeningOutcome: outcome as ConsortFact['screeningOutcome'], exclusionReasons: excluded(outcome, rs), arm: null, receivedAllocated: null, endStatus: null, endReason: null, analysed: false,
  });
  // The randomised one by one (below); everyone else by group (the group's count less its randomised members), one
  // shared fact per group: the excluded by outcome and reasons, the others by site and outcome.
  const randomisedIn = new Map<string, number>();
  const bump = (k: string) => randomisedIn.set(k, (randomisedIn.get(k) ?? 0) + 1);
  const reasonsKey = (outcome: string, v: string | string[] | null) => `${outcome}|${JSON.stringify(reasonsOf(v))}`;
  for (const p of randomised) {
    bump(`${p.site_id}|${p.screening_outcome}`);
    if (EXCLUDED.includes(p.screening_outcome)) bump(reasonsKey(p.screening_outcome, p.screening_reasons));
  }
  const repeat = (f: ConsortFact, n: number) => {
    for (let i = 0; i < n; i++) facts.push(f);
  };
  for (const g of excludedGroups) repeat(fact(g.screening_outcome, reasonsOf(g.screening_reasons)), Number(g.n) - (randomisedIn.get(reasonsKey(g.screening_outcome, g.screening_reasons)) ?? 0));
  for (const g of groups) if (!EXCLUDED.includes(g.screening_outcome)) repeat(fact(g.screening_outcome, null), Number(g.n) - (randomisedIn.get(`${g.site_id}|${g.screening_outcome}`) ?? 0));
  for (const p of randomised) {
    const pid = Number(p.id);
    const end = endOf.get(pid);
    const endStatus = end && typeof end.DSDECOD === 'string' && END_STATUSES.has(end.DSDECOD) ? (end.DSDECOD as ConsortFact['endStatus']) : null;
    facts.push({
      screeningOutcome: p.screening_outcome as ConsortFact['screeningOutcome'],
      exclusionReasons: excluded(p.screening_outcome, reasonsOf(p.screening_reasons)),
      arm: p.arm,
      receivedAllocated: has(pid, 'therapy_session') ? true : null,
      endStatus,
      endReason: end && typeof end.DSTERM === 'string' ? end.DSTERM : null,
      analysed: has(pid, 'follow_up', 'week12'),
    });
  }
  const arms = ((study.config.arms ?? []) as { code: string; label: string }[]).map((a) => ({ code: a.code, label: a.label }));
  const consort = consortCounts(facts, { arms, pooled: !byArm });

  return {
    today,
    byArm,
    lockedForAnalysis: locked,
    blindingIntegrity: locked || !isBlinded(roles, study.config) ? blindingIntegrity(study, guesses, allocBy) : null,
    recruitment,
    totals: { target: sum('target'), screened: sum('screened'), eligible: sum('eligible'), consented: sum('consented'), randomised: sum('randomised') },
    exclusionReasons: [...reasons.entries()].sort((a, b) => b[1] - a[1] || (a[0] < b[0] ? -1 : a[0] > b[0] ? 1 : 0)).slice(0, 5).map(([reason, n]) => ({ reason, n })),
    projection,
    recruitmentChart,
    completeness,
    openQueries,
    safety: {
      adverseEvents: Number(adverseEvents[0]?.n ?? 0),
      serious: Number(saes[0]?.serious ?? 0),
      seriousAwaiting: Number(saes[0]?.awaiting ?? 0),
      seriousOverdue: Number(saes[0]?.overdue ?? 0),
    },
    consort,
    consortSvg: consortSvg(consort),
  };
}

/**
 * Cumulative randomised per calendar month beside the planned line. The plan runs linearly from the study's
 * `recruitmentStart` over `recruitmentMonths` (defaults: the first randomisation's month, 18 months) to the target;
 * the chart spans the planned period and every month up to today. `randomised` is null after the current month.
 */
export function recruitmentByMonth(study: StudyLike, dates: string[], target: number, today: string) {
  const sorted = [...dates].sort();
  const start = typeof study.config.recruitmentStart === 'string' ? study.config.recruitmentStart : (sorted[0] ?? today);
  const months = typeof study.config.recruitmentMonths === 'number' ? study.config.recruitmentMonths : 18;
  const planned = target > 0 ? plannedLine({ start, months, target }) : [];
  const lastPlanned = planned.at(-1)?.month ?? start.slice(0, 7);
  const thisMonth = today.slice(0, 7);
  const to = lastPlanned > thisMonth ? lastPlanned : thisMonth;
  const actual = cumulativeByMonth(sorted, start.slice(0, 7) < thisMonth ? start.slice(0, 7) : thisMonth, to);
  const plannedBy = new Map(planned.map((m) => [m.month, m.planned]));
  return actual.map((m) => ({
    month: m.month,
    randomised: m.month <= thisMonth ? m.cumulative : null,
    planned: plannedBy.get(m.month) ?? (m.month > lastPlanned ? target : null),
  }));
}

/**
 * Blinding integrity from the assessors' guesses at follow-up: the share of guesses that name the actual arm,
 * with a Wilson 95 % interval, among guesses that named an arm ("cannot tell" is counted apart). Unblinded roles only.
 */
export function blindingIntegrity(study: StudyLike, records: { participantId: number; formKey: string; data: Record<string, unknown> }[], allocBy: Map<number, { arm: string }>) {
  const map = (study.config.guessMap as Record<string, string> | undefined) ?? { guess_passive: 'EPM', guess_active: 'EAM' };
  let guesses = 0;
  let correct = 0;
  let cannotTell = 0;
  for (const r of records) {
    if (r.formKey !== 'follow_up') continue;
    const al = allocBy.get(r.participantId);
    const g = r.data.guess_arm;
    if (!al || typeof g !== 'string') continue;
    if (!(g in map)) {
      cannotTell++;
      continue;
    }
    guesses++;
    if (map[g] === al.arm) correct++;
  }
  const ci = guesses ? wilsonCI(correct, guesses) : null;
  return { guesses, correct, cannotTell, proportion: guesses ? correct / guesses : null, ci95: ci ? [ci.lower, ci.upper] : null };
}
