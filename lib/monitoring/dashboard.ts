import 'server-only';
import { Op } from 'sequelize';
import { Allocation, CrfRecord, Participant, Query, SaeReport, Site, Visit, sequelize } from '@/models';
import { visitStatus } from '@/lib/schedule';
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

const END_STATUSES = new Set(['completed', 'discontinued_intervention', 'withdrawn_follow_up', 'withdrew_consent', 'lost_to_follow_up', 'died', 'other']);

/**
 * The investigator's dashboard for a study (or the given sites): recruitment against target, the screening funnel,
 * a projected date to reach the target, follow-up completeness per visit, open queries, AE and SAE counts, and the
 * CONSORT flow. Pooled over arms unless the study allows these roles to see arms, or the study is hard-locked.
 */
export async function dashboard(study: StudyLike, siteIds: number[] | 'all', roles: Role[], now = new Date()) {
  // After the study's hard lock the allocation is revealed for analysis, so everyone sees arms and blinding integrity.
  const locked = await isLockedForAnalysis(study.id);
  const byArm = locked || armLevelAllowed(study, roles);
  const siteWhere = siteIds === 'all' ? {} : { id: { [Op.in]: siteIds.length ? siteIds : [0] } };
  const sites = await Site.findAll({ where: { studyId: study.id, ...siteWhere }, order: [['code', 'ASC']] });
  const ids = sites.map((s) => s.id);
  const today = todayIn(sites[0]?.timeZone ?? 'UTC', now);
  const [participants, allocations, records, visits, queries, saes] = await Promise.all([
    Participant.findAll({ where: { studyId: study.id, siteId: { [Op.in]: ids } }, attributes: ['id', 'siteId', 'screeningOutcome', 'screeningReasons'], raw: true }).then((rows) =>
      (rows as unknown as { id: number; siteId: number; screeningOutcome: string; screeningReasons: string[] | string | null }[]).map((p) => ({
        ...p, screeningReasons: (typeof p.screeningReasons === 'string' ? JSON.parse(p.screeningReasons) : p.screeningReasons) as string[] | null,
      })),
    ),
    Allocation.findAll({ where: { studyId: study.id, siteId: { [Op.in]: ids } } }),
    // Only what the counts need: the whole documents of the end-of-participation form (status and reason), and of the
    // follow-up only the assessor's guess, taken out by MariaDB; the other forms only by presence. Plain rows (raw)
    // rather than model instances: a study of thousands of participants has tens of thousands of records.
    CrfRecord.findAll({
      where: { studyId: study.id, siteId: { [Op.in]: ids }, status: 'submitted', formKey: { [Op.in]: ['consent', 'end_of_participation', 'therapy_session', 'follow_up', 'adverse_event'] } },
      attributes: ['participantId', 'formKey', 'visitKey', [sequelize.literal("CASE WHEN form_key = 'end_of_participation' THEN data END"), 'eop'], [sequelize.literal("CASE WHEN form_key = 'follow_up' THEN JSON_UNQUOTE(JSON_EXTRACT(data, '$.guess_arm')) END"), 'guess']],
      raw: true,
    }) as unknown as Promise<{ participantId: number; formKey: string; visitKey: string; eop: string | Record<string, unknown> | null; guess: string | null }[]>,
    Visit.findAll({ where: { studyId: study.id, siteId: { [Op.in]: ids } }, attributes: ['visitKey', 'label', 'target', 'earliest', 'latest', 'completedOn'] }),
    Query.findAll({ where: { studyId: study.id, siteId: { [Op.in]: ids }, state: { [Op.ne]: 'closed' } }, attributes: ['siteId', 'createdAt', 'state'] }),
    SaeReport.findAll({ where: { studyId: study.id, siteId: { [Op.in]: ids } } }),
  ]);
  const allocBy = new Map(allocations.map((a) => [a.participantId, a]));
  // Which forms (and form@visit) each participant has, so every look-up is constant time.
  const present = new Set<string>();
  const endOf = new Map<number, Record<string, unknown>>();
  const guesses: { participantId: number; formKey: string; data: Record<string, unknown> }[] = [];
  for (const r of records) {
    present.add(`${r.participantId}|${r.formKey}`);
    present.add(`${r.participantId}|${r.formKey}|${r.visitKey}`);
    if (r.formKey === 'end_of_participation' && r.eop && !endOf.has(r.participantId)) endOf.set(r.participantId, typeof r.eop === 'string' ? JSON.parse(r.eop) : r.eop);
    if (r.formKey === 'follow_up') guesses.push({ participantId: r.participantId, formKey: 'follow_up', data: r.guess === null ? {} : { guess_arm: r.guess } });
  }
  const has = (pid: number, form: string, visit?: string) => present.has(visit === undefined ? `${pid}|${form}` : `${pid}|${form}|${visit}`);
  const bySite = new Map<number, typeof participants>();
  for (const p of participants) (bySite.get(p.siteId) ?? bySite.set(p.siteId, []).get(p.siteId)!).push(p);

  const recruitment = sites.map((s) => {
    const ps = bySite.get(s.id) ?? [];
    return {
      site: s.code, name: s.name, target: s.recruitmentTarget, screened: ps.length,
      eligible: ps.filter((p) => p.screeningOutcome === 'eligible').length,
      consented: ps.filter((p) => has(p.id, 'consent')).length,
      randomised: ps.filter((p) => allocBy.has(p.id)).length,
    };
  });
  const sum = (k: 'target' | 'screened' | 'eligible' | 'consented' | 'randomised') => recruitment.reduce((a, r) => a + r[k], 0);
  const reasons = new Map<string, number>();
  for (const p of participants) if (p.screeningOutcome === 'not_eligible') for (const r of p.screeningReasons ?? []) reasons.set(r, (reasons.get(r) ?? 0) + 1);

  const dates = allocations.map((a) => a.allocatedAt.toISOString().slice(0, 10)).filter((d) => d <= today);
  const projection = projectTargetDate({ randomisedDates: dates, target: sum('target'), today });
  const recruitmentChart = recruitmentByMonth(study, dates, sum('target'), today);

  const completeness: Record<string, { label: string; inWindow: number; outOfWindow: number; overdue: number; missed: number; open: number; upcoming: number }> = {};
  for (const v of visits) {
    const c = (completeness[v.visitKey] ??= { label: v.label, inWindow: 0, outOfWindow: 0, overdue: 0, missed: 0, open: 0, upcoming: 0 });
    const st = visitStatus({ target: v.target, earliest: v.earliest, latest: v.latest }, today, v.completedOn ?? undefined);
    if (st === 'done') c.inWindow++;
    else if (st === 'done-out-of-window') c.outOfWindow++;
    else if (st === 'overdue') c.overdue++;
    else if (st === 'missed') c.missed++;
    else if (st === 'open') c.open++;
    else c.upcoming++;
  }

  const age = (d: Date) => (now.getTime() - d.getTime()) / 86400000;
  const openQueries = sites.map((s) => {
    const qs = queries.filter((q) => q.siteId === s.id);
    return { site: s.code, total: qs.length, under7: qs.filter((q) => age(q.createdAt) < 7).length, from7to30: qs.filter((q) => age(q.createdAt) >= 7 && age(q.createdAt) <= 30).length, over30: qs.filter((q) => age(q.createdAt) > 30).length };
  });

  const facts: ConsortFact[] = participants.map((p) => {
    const al = allocBy.get(p.id);
    const end = endOf.get(p.id);
    const endStatus = end && typeof end.DSDECOD === 'string' && END_STATUSES.has(end.DSDECOD) ? (end.DSDECOD as ConsortFact['endStatus']) : null;
    return {
      screeningOutcome: p.screeningOutcome as ConsortFact['screeningOutcome'],
      exclusionReasons: p.screeningOutcome === 'not_eligible' || p.screeningOutcome === 'declined' || p.screeningOutcome === 'other' ? p.screeningReasons ?? [] : [],
      arm: al ? al.arm : null,
      receivedAllocated: al ? (has(p.id, 'therapy_session') ? true : null) : null,
      endStatus: al ? endStatus : null,
      endReason: al && end && typeof end.DSTERM === 'string' ? end.DSTERM : null,
      analysed: !!al && has(p.id, 'follow_up', 'week12'),
    };
  });
  const arms = ((study.config.arms ?? []) as { code: string; label: string }[]).map((a) => ({ code: a.code, label: a.label }));
  const consort = consortCounts(facts, { arms, pooled: !byArm });

  return {
    today,
    byArm,
    lockedForAnalysis: locked,
    blindingIntegrity: locked || !isBlinded(roles, study.config) ? blindingIntegrity(study, guesses, allocBy) : null,
    recruitment,
    totals: { target: sum('target'), screened: sum('screened'), eligible: sum('eligible'), consented: sum('consented'), randomised: sum('randomised') },
    exclusionReasons: [...reasons.entries()].sort((a, b) => b[1] - a[1]).slice(0, 5).map(([reason, n]) => ({ reason, n })),
    projection,
    recruitmentChart,
    completeness: Object.entries(completeness).map(([key, c]) => ({ key, ...c })),
    openQueries,
    safety: {
      adverseEvents: records.reduce((n, r) => n + (r.formKey === 'adverse_event' ? 1 : 0), 0),
      serious: saes.length,
      seriousAwaiting: saes.filter((s) => !s.followedUpAt && s.deadlineAt >= now).length,
      seriousOverdue: saes.filter((s) => !s.followedUpAt && s.deadlineAt < now).length,
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
