import 'server-only';
import { UniqueConstraintError, type WhereOptions } from 'sequelize';
import { Participant, sequelize } from '@/models';
import { AppError } from '@/lib/errors';
import { appendAudit } from '@/lib/audit';
import type { Role } from '@/lib/roles';
import { assertWritable } from '@/lib/lock';

export const OUTCOMES = ['pending', 'eligible', 'not_eligible', 'declined', 'other'] as const;
export type Outcome = (typeof OUTCOMES)[number];

/** One line of a site's screening log (no names, no hospital numbers). */
export type ScreeningRow = { id: number; screeningNumber: string; screeningDate: string | null; age: number | null; sex: string | null; outcome: string; reasons: string[]; subjectCode: string | null; status: string };

const present = (p: Participant): ScreeningRow => ({
  id: p.id, screeningNumber: p.screeningNumber, screeningDate: p.screeningDate ?? null, age: p.age ?? null, sex: p.sex ?? null,
  outcome: p.screeningOutcome, reasons: p.screeningReasons ?? [], subjectCode: p.subjectCode, status: p.status,
});

/** Records a screened patient in the site's log; eligibility is decided later from the eligibility form. */
export async function recordScreening(a: { studyId: number; siteId: number; screeningNumber: string; screeningDate: string; age: number; sex: 'M' | 'F' | 'U'; actor: { userId: number; role: Role; requestId?: string } }) {
  try {
    return await sequelize.transaction(async (t) => {
      await assertWritable(a.studyId, a.siteId, 'entry', t);
      const p = await Participant.create({ studyId: a.studyId, siteId: a.siteId, screeningNumber: a.screeningNumber, subjectCode: null, createdBy: a.actor.userId, screeningDate: a.screeningDate, age: a.age, sex: a.sex, screeningOutcome: 'pending', screeningReasons: [] }, { transaction: t });
      await appendAudit(t, [{ actorUserId: a.actor.userId, actorRole: a.actor.role, studyId: a.studyId, siteId: a.siteId, entityType: 'participant', entityId: p.id, action: 'create', newValue: { screeningNumber: a.screeningNumber, screeningDate: a.screeningDate, age: a.age, sex: a.sex }, requestId: a.actor.requestId }]);
      return present(p);
    });
  } catch (e) {
    if (e instanceof UniqueConstraintError) throw new AppError('conflict', `Screening number ${a.screeningNumber} is already in this site's log.`, { fields: { screeningNumber: 'Already used at this site.' } });
    throw e;
  }
}

/** Records that a screened patient declined or left screening for another reason (eligibility comes from the form). */
export async function setScreeningOutcome(a: { studyId: number; siteId: number; participantId: number; outcome: 'declined' | 'other'; reason: string; actor: { userId: number; role: Role; requestId?: string } }) {
  return sequelize.transaction(async (t) => {
    await assertWritable(a.studyId, a.siteId, 'entry', t);
    const p = await Participant.findOne({ where: { id: a.participantId, studyId: a.studyId, siteId: a.siteId }, transaction: t, lock: t.LOCK.UPDATE });
    if (!p) throw new AppError('not_found', 'The participant was not found at this site.');
    if (p.subjectCode) throw new AppError('conflict', 'The participant is already randomised; record an end of participation instead.');
    // A patient who did not meet the criteria was not enrolled for that reason (CONSORT: "not meeting inclusion
    // criteria"); recording "declined" or "other" over it would move them to another box of the flow diagram.
    if (p.screeningOutcome === 'not_eligible') {
      throw new AppError('conflict', 'This patient did not meet the eligibility criteria, which stays the reason they were not enrolled. Correct the eligibility form if that decision was wrong.');
    }
    const old = { outcome: p.screeningOutcome, reasons: p.screeningReasons };
    await p.update({ screeningOutcome: a.outcome, screeningReasons: [a.reason], status: a.outcome }, { transaction: t });
    await appendAudit(t, [{ actorUserId: a.actor.userId, actorRole: a.actor.role, studyId: a.studyId, siteId: a.siteId, entityType: 'participant', entityId: p.id, action: 'update', itemPath: '/screeningOutcome', oldValue: old, newValue: { outcome: a.outcome, reasons: [a.reason] }, reason: a.reason, requestId: a.actor.requestId }]);
    return present(p);
  });
}

const SORTS: Record<string, string> = { number: 'screeningNumber', date: 'screeningDate', age: 'age', outcome: 'screeningOutcome' };

/** The site's screening log: sortable, filterable by outcome, paged on the server. */
export async function screeningLog(a: { studyId: number; siteId: number; page: number; pageSize: number; outcome?: string; sort?: string; dir?: string }) {
  const where: WhereOptions = { studyId: a.studyId, siteId: a.siteId };
  if (a.outcome) {
    if (!(OUTCOMES as readonly string[]).includes(a.outcome)) throw new AppError('bad_request', `Unknown outcome ${a.outcome}.`);
    Object.assign(where, { screeningOutcome: a.outcome });
  }
  const col = SORTS[a.sort ?? 'date'] ?? 'screeningDate';
  const dir = a.dir === 'asc' ? 'ASC' : 'DESC';
  const { rows, count } = await Participant.findAndCountAll({ where, order: [[col, dir], ['id', dir]], offset: (a.page - 1) * a.pageSize, limit: a.pageSize });
  return { total: count, rows: rows.map(present) };
}
