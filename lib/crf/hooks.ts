import 'server-only';
import type { Transaction } from 'sequelize';
import { Allocation, Participant, Study, Visit } from '@/models';
import { PROGRAMMES, checkSession, type ExerciseKind } from '@/lib/therapy';
import { postOpDay } from '@/lib/schedule';
import { createSystemDeviation } from './deviations';
import type { Violation } from './rules';
import { answerByChange, openEditCheckQueries } from '@/lib/monitoring/queries';
import { clearVerifications, invalidateSignatures } from '@/lib/monitoring/verification';
import { startSaeClock } from '@/lib/monitoring/safety';
import type { SaeReport } from '@/models';
import { appendAudit } from '@/lib/audit';
import { decideEligibility } from '@/lib/screening/eligibility';
import { completeVisitFromRecord } from '@/lib/visits';
import type { CrfRecord } from '@/models';

type HookCtx = { record: CrfRecord; t: Transaction; actor: { userId: number; role: string; requestId?: string }; changedPaths: string[]; created: boolean; reasonCode?: string; reasonText?: string | null; findings: Violation[] };

/**
 * Consequences of a saved record that must commit with it: a submitted visit form completes its visit (and an
 * out-of-window date creates a protocol deviation); submitting the eligibility form makes the server's decision
 * (eligible or not, with the reasons) and writes it to the screening log.
 */
export async function afterRecordSaved(ctx: HookCtx): Promise<{ sae: SaeReport | null }> {
  // A new record or a changed one alters the casebook a signature covers.
  if (ctx.created || ctx.changedPaths.length) await invalidateSignatures(ctx.t, ctx.record);
  if (ctx.changedPaths.length) {
    await clearVerifications(ctx.t, ctx.record, ctx.changedPaths);
    if (ctx.reasonCode === 'query_response') await answerByChange(ctx.t, ctx.record, ctx.changedPaths, ctx.actor, ctx.reasonText ?? 'query response');
  }
  await openEditCheckQueries(ctx.t, ctx.record, ctx.findings);
  await completeVisitFromRecord(ctx.t, ctx.record);
  await applyEligibilityDecision(ctx);
  await checkTherapySession(ctx);
  return { sae: await startSaeClock(ctx.t, ctx.record) };
}

/** A logged therapy session with an exercise the participant's current phase does not allow becomes a deviation (unblinded-only). */
async function checkTherapySession({ record, t }: HookCtx): Promise<void> {
  if (record.formKey !== 'therapy_session' || record.status !== 'submitted') return;
  const alloc = await Allocation.findOne({ where: { participantId: record.participantId }, transaction: t });
  const study = alloc && (await Study.findByPk(alloc.studyId, { transaction: t }));
  const key = (study?.config.programmes as Record<string, string> | undefined)?.[alloc?.arm ?? ''];
  const programme = key ? PROGRAMMES[key] : undefined;
  const visit = await Visit.findOne({ where: { participantId: record.participantId }, transaction: t });
  const date = record.data.session_date;
  if (!programme || !visit || typeof date !== 'string') return;
  const day = postOpDay(visit.day0, date);
  const exercises = (Array.isArray(record.data.exercises) ? record.data.exercises : []) as { kind: ExerciseKind; repetitions?: number }[];
  // Sessions in this form are delivered by a therapist, so they count as supervised.
  const flags = checkSession(programme, { postOpDay: day, supervised: true, exercises: exercises.map((e) => ({ kind: e.kind, repetitions: e.repetitions ?? 0 })) });
  if (!flags.length) return;
  await createSystemDeviation(t, {
    studyId: record.studyId, siteId: record.siteId, participantId: record.participantId, date, category: 'wrong_exercise_for_phase', revealsAllocation: true, reason: 'therapy session checked against the programme',
    text: `Therapy session on ${date} (post-operative day ${day}): ${flags.map((f) => f.reason).join(' ')}`,
  });
}

async function applyEligibilityDecision({ record, t, actor }: HookCtx): Promise<void> {
  if (record.formKey !== 'eligibility' || record.status !== 'submitted') return;
  const p = await Participant.findByPk(record.participantId, { transaction: t, lock: t.LOCK.UPDATE });
  if (!p || p.subjectCode) return;
  const d = decideEligibility(record.data);
  const outcome = d.eligible ? 'eligible' : 'not_eligible';
  if (p.screeningOutcome === outcome && JSON.stringify(p.screeningReasons ?? []) === JSON.stringify(d.reasons)) return;
  const old = { outcome: p.screeningOutcome, reasons: p.screeningReasons };
  await p.update({ screeningOutcome: outcome, screeningReasons: d.reasons, status: d.eligible ? 'eligible' : 'not_eligible' }, { transaction: t });
  await appendAudit(t, [{ actorUserId: actor.userId, actorRole: actor.role, studyId: p.studyId, siteId: p.siteId, entityType: 'participant', entityId: p.id, action: 'update', itemPath: '/screeningOutcome', oldValue: old, newValue: { outcome, reasons: d.reasons }, reason: 'eligibility form submitted', requestId: actor.requestId }]);
}
