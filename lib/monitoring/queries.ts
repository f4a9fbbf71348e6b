import 'server-only';
import { Op, QueryTypes, type Transaction } from 'sequelize';
import { CrfRecord, Participant, Query, QueryMessage, sequelize } from '@/models';
import { memberEmails } from '@/lib/users/recipients';
import { AppError } from '@/lib/errors';
import { appendAudit } from '@/lib/audit';
import { sendMail } from '@/lib/mail';
import { logger } from '@/lib/log';
import type { Role } from '@/lib/roles';
import type { Violation } from '@/lib/crf/rules';
import { assertWritable } from '@/lib/lock';
import { studyForms } from '@/lib/crf/definitions';

type Actor = { userId: number; role: Role; requestId?: string };
/** Roles that raise queries; site staff answer them. */
export const QUERY_OPENERS: Role[] = ['monitor', 'data_manager'];
export const QUERY_ANSWERERS: Role[] = ['coordinator', 'therapist', 'assessor', 'investigator'];

export type QueryView = { id: number; participantId: number; recordId: number; formKey: string; itemPath: string; state: string; source: string; message: string; openedAt: string; ageDays: number; messages: { kind: string; role: string; text: string; at: string }[] };

async function present(q: Query, now = new Date()): Promise<QueryView> {
  const msgs = await QueryMessage.findAll({ where: { queryId: q.id }, order: [['id', 'ASC']] });
  return {
    id: q.id, participantId: q.participantId, recordId: q.recordId, formKey: q.formKey, itemPath: q.itemPath, state: q.state, source: q.source, message: q.message,
    openedAt: q.createdAt.toISOString(), ageDays: Math.floor((now.getTime() - q.createdAt.getTime()) / 86400000),
    messages: msgs.map((m) => ({ kind: m.kind, role: m.role, text: m.text, at: m.createdAt.toISOString() })),
  };
}

async function step(t: Transaction, q: Query, actor: { userId: number | null; role: string; requestId?: string }, kind: QueryMessage['kind'], text: string, newState: Query['state']) {
  const old = q.state;
  await q.update({ state: newState, closedAt: newState === 'closed' ? new Date() : null }, { transaction: t });
  await QueryMessage.create({ queryId: q.id, userId: actor.userId, role: actor.role, kind, text }, { transaction: t });
  await appendAudit(t, [{ actorUserId: actor.userId, actorRole: actor.role, studyId: q.studyId, siteId: q.siteId, entityType: 'query', entityId: q.id, action: kind, itemPath: '/state', oldValue: kind === 'open' ? null : old, newValue: newState, reason: text.slice(0, 1000), requestId: actor.requestId }]);
}

async function mailSite(q: Query, subjectCode: string) {
  const to = await memberEmails(q.studyId, q.siteId, ['coordinator']);
  if (!to.length) return;
  try {
    await sendMail({ to, subject: `Excursion: data query on ${subjectCode}`, text: `A data query was opened on ${subjectCode}, form ${q.formKey}, item ${q.itemPath}:\n\n${q.message}\n\nPlease answer it in Excursion.` });
  } catch (e) {
    logger.error({ err: String(e) }, 'query e-mail could not be sent');
  }
}

/** Opens a query on an item of a record of this site (monitor or data manager); the site is e-mailed. */
export async function openQuery(a: { studyId: number; siteId: number; recordId: number; itemPath: string; message: string; actor: Actor }) {
  if (!QUERY_OPENERS.includes(a.actor.role)) throw new AppError('forbidden', 'Only monitors and data managers open queries.');
  const rec = await CrfRecord.findOne({ where: { id: a.recordId, studyId: a.studyId, siteId: a.siteId } });
  if (!rec) throw new AppError('not_found', 'The record was not found at this site.');
  const q = await sequelize.transaction(async (t) => {
    await assertWritable(a.studyId, a.siteId, 'entry', t);
    const q = await Query.create({ studyId: a.studyId, siteId: a.siteId, participantId: rec.participantId, recordId: rec.id, formKey: rec.formKey, itemPath: a.itemPath, state: 'open', source: 'manual', ruleId: null, message: a.message, openedBy: a.actor.userId, closedAt: null }, { transaction: t });
    await step(t, q, a.actor, 'open', a.message, 'open');
    return q;
  });
  const p = await Participant.findByPk(rec.participantId);
  await mailSite(q, p?.subjectCode ?? p?.screeningNumber ?? '');
  return present(q);
}

/** Opens queries for soft edit-check findings of a save (inside its transaction), once per rule and item. */
export async function openEditCheckQueries(t: Transaction, rec: CrfRecord, findings: Violation[]) {
  for (const v of findings.filter((f) => f.level === 'soft')) {
    const itemPath = v.items[0] ?? '/';
    const exists = await Query.findOne({ where: { recordId: rec.id, itemPath, ruleId: v.ruleId, state: { [Op.ne]: 'closed' } }, transaction: t });
    if (exists) continue;
    const q = await Query.create({ studyId: rec.studyId, siteId: rec.siteId, participantId: rec.participantId, recordId: rec.id, formKey: rec.formKey, itemPath, state: 'open', source: 'edit_check', ruleId: v.ruleId, message: v.message, openedBy: null, closedAt: null }, { transaction: t });
    await step(t, q, { userId: null, role: 'system' }, 'open', v.message, 'open');
  }
}

/** Marks open queries on changed items answered when the change gives "query response" as its reason. */
export async function answerByChange(t: Transaction, rec: CrfRecord, paths: string[], actor: { userId: number; role: string; requestId?: string }, reason: string) {
  const qs = await Query.findAll({ where: { recordId: rec.id, itemPath: { [Op.in]: paths.length ? paths : [''] }, state: 'open' }, transaction: t, lock: t.LOCK.UPDATE });
  for (const q of qs) await step(t, q, actor, 'answer', `Value changed: ${reason}`, 'answered');
}

async function load(t: Transaction, a: { studyId: number; siteId: number; queryId: number }) {
  const q = await Query.findOne({ where: { id: a.queryId, studyId: a.studyId, siteId: a.siteId }, transaction: t, lock: t.LOCK.UPDATE });
  if (!q) throw new AppError('not_found', 'The query was not found at this site.');
  return q;
}

/** Site staff answer an open query (they may also change the value with the reason "query response"). */
export async function answerQuery(a: { studyId: number; siteId: number; queryId: number; text: string; actor: Actor }) {
  if (!QUERY_ANSWERERS.includes(a.actor.role)) throw new AppError('forbidden', 'Queries are answered by the site’s staff.');
  const q = await sequelize.transaction(async (t) => {
    await assertWritable(a.studyId, a.siteId, 'query', t);
    const q = await load(t, a);
    if (q.state !== 'open') throw new AppError('conflict', `The query is ${q.state}; only an open query can be answered.`);
    await step(t, q, a.actor, 'answer', a.text, 'answered');
    return q;
  });
  return present(q);
}

/** Closes (or re-opens) a query: the person who opened it, or a data manager. */
export async function closeOrReopen(a: { studyId: number; siteId: number; queryId: number; text: string; reopen: boolean; actor: Actor }) {
  const q = await sequelize.transaction(async (t) => {
    // Closing winds down outstanding work and is allowed under a soft lock; re-opening creates new work and is not.
    await assertWritable(a.studyId, a.siteId, a.reopen ? 'entry' : 'query', t);
    const q = await load(t, a);
    const mayDecide = a.actor.role === 'data_manager' || (q.openedBy !== null && q.openedBy === a.actor.userId);
    if (!mayDecide) throw new AppError('forbidden', 'Only the person who opened the query or a data manager can close or re-open it.');
    if (a.reopen ? q.state !== 'closed' && q.state !== 'answered' : q.state === 'closed') throw new AppError('conflict', a.reopen ? 'Only an answered or closed query can be re-opened.' : 'The query is already closed.');
    await step(t, q, a.actor, a.reopen ? 'reopen' : 'close', a.text || (a.reopen ? 'Re-opened' : 'Closed'), a.reopen ? 'open' : 'closed');
    return q;
  });
  return present(q);
}

/** Queries of a site with filters (state, form, minimum age in days) and counts by state; paged. */
export async function listQueries(a: { studyId: number; siteId: number; state?: string; formKey?: string; minAgeDays?: number; visibleForms: string[]; page: number; pageSize: number; now?: Date }) {
  const now = a.now ?? new Date();
  const where: Record<string, unknown> = { studyId: a.studyId, siteId: a.siteId, formKey: { [Op.in]: a.visibleForms.length ? a.visibleForms : [''] } };
  if (a.state) where.state = a.state;
  if (a.formKey) where.formKey = a.formKey;
  if (a.minAgeDays) where.createdAt = { [Op.lte]: new Date(now.getTime() - a.minAgeDays * 86400000) };
  const { rows, count } = await Query.findAndCountAll({ where, order: [['createdAt', 'ASC'], ['id', 'ASC']], offset: (a.page - 1) * a.pageSize, limit: a.pageSize });
  const byState = await Query.findAll({ where: { studyId: a.studyId, siteId: a.siteId, formKey: where.formKey as object }, attributes: ['state', [sequelize.fn('COUNT', sequelize.col('id')), 'n']], group: ['state'], raw: true });
  const counts = Object.fromEntries((byState as unknown as { state: string; n: number }[]).map((r) => [r.state, Number(r.n)]));
  // The list names the participant (study ID once randomised, else screening number) and the form by its title, and
  // carries the record's visit and instance, so its link opens the very record the query is on (a follow-up visit, a
  // second adverse event), not the form's first slot: one query for the records and their participants.
  const recIds = [...new Set(rows.map((q) => q.recordId))];
  const recs = recIds.length
    ? await sequelize.query<{ id: number; visit_key: string; instance: number; subject_code: string | null; screening_number: string }>(
        `SELECT r.id, r.visit_key, r.instance, p.subject_code, p.screening_number
           FROM crf_records r JOIN participants p ON p.id = r.participant_id
          WHERE r.id IN (?) AND r.study_id = ?`,
        { replacements: [recIds, a.studyId], type: QueryTypes.SELECT },
      )
    : [];
  const slot = new Map(recs.map((r) => [Number(r.id), r]));
  const titles = new Map((await studyForms(a.studyId)).map((f) => [f.key, f.title]));
  const listed = await Promise.all(rows.map(async (q) => {
    const r = slot.get(q.recordId);
    return {
      ...(await present(q, now)),
      participant: r ? (r.subject_code ?? r.screening_number) : String(q.participantId),
      formTitle: titles.get(q.formKey) ?? q.formKey,
      visitKey: r?.visit_key ?? '',
      instance: r ? Number(r.instance) : 1,
    };
  }));
  return { total: count, counts: { open: counts.open ?? 0, answered: counts.answered ?? 0, closed: counts.closed ?? 0 }, rows: listed };
}
