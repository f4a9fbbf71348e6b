import 'server-only';
import { Op, type Transaction } from 'sequelize';
import { CrfRecord, Participant, Visit } from '@/models';
import { appendAudit, type AuditInput } from '@/lib/audit';
import { addDays, isValidDate, visitStatus, visitWindow, type VisitStatus } from '@/lib/schedule';
import { createSystemDeviation } from '@/lib/crf/deviations';

/** One visit of the schedule of assessments (study configuration `schedule`). */
export type VisitDef = { key: string; label: string; offsetDays: number; before: number; after: number; forms: string[]; blinded: boolean; required: boolean };

type StudyLike = { id: number; config: Record<string, unknown> };

export function scheduleOf(study: StudyLike): VisitDef[] {
  return (study.config.schedule as VisitDef[] | undefined) ?? [];
}

/** Creates the participant's visits with target date and window from day 0 (inside the randomisation transaction). */
export async function createVisits(t: Transaction, study: StudyLike, p: { id: number; siteId: number }, day0: string, opts: { randomisedOn?: string } = {}) {
  const defs = scheduleOf(study);
  // A day-0 visit whose forms were all submitted before randomisation (the baseline assessment, which randomisation
  // requires, is entered without a visit) is done on the day of randomisation.
  const before = opts.randomisedOn
    ? new Set((await CrfRecord.findAll({ where: { participantId: p.id, visitKey: '', status: 'submitted' }, attributes: ['formKey'], transaction: t })).map((r) => r.formKey))
    : new Set<string>();
  const doneBefore = (d: VisitDef) => d.offsetDays === 0 && d.forms.length > 0 && d.forms.every((f) => before.has(f));
  await Visit.bulkCreate(
    defs.map((d) => {
      const w = visitWindow(day0, d);
      return { studyId: study.id, siteId: p.siteId, participantId: p.id, visitKey: d.key, label: d.label, day0, target: w.target, earliest: w.earliest, latest: w.latest, blinded: d.blinded, required: d.required, forms: d.forms, completedOn: doneBefore(d) ? opts.randomisedOn! : null };
    }),
    { transaction: t },
  );
  const doneKeys = defs.filter(doneBefore).map((d) => d.key);
  if (!doneKeys.length) return;
  // Read back (with their ids) for the audit rows.
  const done = await Visit.findAll({ where: { participantId: p.id, visitKey: { [Op.in]: doneKeys } }, transaction: t });
  const audit: AuditInput[] = done.map((v) => ({ actorUserId: null, actorRole: 'system', studyId: v.studyId, siteId: v.siteId, entityType: 'visit', entityId: v.id, action: 'update', itemPath: '/completedOn', oldValue: null, newValue: v.completedOn, reason: `${v.forms.join(', ')} submitted before randomisation` }));
  await appendAudit(t, audit);
}

/** The date a record says the visit took place. */
function recordDate(r: CrfRecord): string | null {
  for (const k of ['VISDAT', 'session_date', 'DSSTDAT']) {
    const v = r.data[k];
    if (typeof v === 'string' && isValidDate(v)) return v;
  }
  return null;
}

/**
 * Marks a visit done when one of its forms is submitted for it; a visit done outside its window
 * creates a protocol deviation record (system-entered, audited) for the site to review.
 */
export async function completeVisitFromRecord(t: Transaction, r: CrfRecord) {
  if (!r.visitKey || r.status !== 'submitted') return;
  const v = await Visit.findOne({ where: { participantId: r.participantId, visitKey: r.visitKey }, transaction: t, lock: t.LOCK.UPDATE });
  if (!v || !v.forms.includes(r.formKey)) return;
  const date = recordDate(r);
  if (!date || v.completedOn === date) return;
  const old = v.completedOn;
  await v.update({ completedOn: date }, { transaction: t });
  const audit: AuditInput[] = [{ actorUserId: null, actorRole: 'system', studyId: v.studyId, siteId: v.siteId, entityType: 'visit', entityId: v.id, action: 'update', itemPath: '/completedOn', oldValue: old, newValue: date, reason: `${r.formKey} submitted` }];
  await appendAudit(t, audit);
  if ((date < v.earliest || date > v.latest) && !old) {
    await createSystemDeviation(t, {
      studyId: v.studyId, siteId: v.siteId, participantId: v.participantId, date, category: 'visit_out_of_window', revealsAllocation: false, reason: 'visit out of window',
      text: `${v.label} was done on ${date}, outside its window ${v.earliest} to ${v.latest} (target ${v.target}).`,
    });
  }
}

/** A line of a worklist; nothing in it reveals an arm. */
export type WorklistRow = { visitId: number; participantId: number; subjectCode: string | null; siteCode: string; visitKey: string; label: string; target: string; earliest: string; latest: string; status: VisitStatus; forms: string[] };

/**
 * Visits due at the given sites. The assessor's list holds blinded visits that are open or overdue; the
 * coordinator's holds upcoming and overdue visits. Sorted by the window's last day.
 */
export async function worklist(a: { study: StudyLike; siteIds: number[] | 'all'; kind: 'assessor' | 'coordinator'; today: string; todayBySite?: Map<number, string>; siteCodes: Map<number, string>; horizonDays?: number }): Promise<WorklistRow[]> {
  const where: Record<string, unknown> = { studyId: a.study.id, completedOn: { [Op.is]: null } };
  if (a.siteIds !== 'all') where.siteId = { [Op.in]: a.siteIds.length ? a.siteIds : [0] };
  if (a.kind === 'assessor') {
    where.blinded = true;
    where.earliest = { [Op.lte]: a.today };
  } else {
    where.earliest = { [Op.lte]: addDays(a.today, a.horizonDays ?? 14) };
  }
  const visits = await Visit.findAll({ where, include: [{ model: Participant, as: 'participant', attributes: ['subjectCode'] }], order: [['latest', 'ASC'], ['id', 'ASC']], limit: 500 });
  const out: WorklistRow[] = [];
  for (const v of visits) {
    // Each site's own calendar day decides whether its window is open.
    const status = visitStatus({ target: v.target, earliest: v.earliest, latest: v.latest }, a.todayBySite?.get(v.siteId) ?? a.today);
    const keep = a.kind === 'assessor' ? status === 'open' || status === 'overdue' : status === 'upcoming' || status === 'open' || status === 'overdue';
    if (!keep) continue;
    out.push({ visitId: v.id, participantId: v.participantId, subjectCode: (v as unknown as { participant: Participant }).participant.subjectCode, siteCode: a.siteCodes.get(v.siteId) ?? '', visitKey: v.visitKey, label: v.label, target: v.target, earliest: v.earliest, latest: v.latest, status, forms: v.forms });
  }
  return out;
}

/** Visits of one participant with their live status (for the casebook). */
export async function participantVisits(participantId: number, today: string, blindedReader: boolean) {
  const vs = await Visit.findAll({ where: { participantId }, order: [['target', 'ASC']] });
  // Blinded readers see every visit's dates (they hold no arm information), but not the therapy-only visits' forms.
  return vs.map((v) => ({
    key: v.visitKey, label: v.label, target: v.target, earliest: v.earliest, latest: v.latest, blinded: v.blinded, completedOn: v.completedOn,
    status: visitStatus({ target: v.target, earliest: v.earliest, latest: v.latest }, today, v.completedOn ?? undefined),
    forms: blindedReader ? v.forms.filter((f) => f !== 'therapy_session') : v.forms,
  }));
}
