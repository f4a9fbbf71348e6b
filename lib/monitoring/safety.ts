import 'server-only';
import { Op, type Transaction } from 'sequelize';
import { Participant, SaeReport, sequelize, type CrfRecord } from '@/models';
import { appendAudit } from '@/lib/audit';
import { AppError } from '@/lib/errors';
import { assertWritable } from '@/lib/lock';
import type { Role } from '@/lib/roles';
import { memberEmails } from '@/lib/users/recipients';
import { sendMail } from '@/lib/mail';
import { logger } from '@/lib/log';

export const SAE_HOURS = 24;
const CRITERIA = ['AESDTH', 'AESLIFE', 'AESHOSP', 'AESDISAB', 'AESCONG', 'AESMIE'];

/** An adverse event is serious when AESER is Y or any seriousness criterion is Y (ICH E2A). */
export function isSerious(d: Record<string, unknown>): boolean {
  return d.AESER === 'Y' || CRITERIA.some((c) => d[c] === 'Y');
}

/**
 * Starts the 24-hour clock when a serious adverse event is submitted (from the site's awareness date and time),
 * inside the save's transaction. Returns whether the e-mail must go out after commit.
 */
export async function startSaeClock(t: Transaction, rec: CrfRecord): Promise<SaeReport | null> {
  if (rec.formKey !== 'adverse_event' || rec.status !== 'submitted' || !isSerious(rec.data)) return null;
  if (await SaeReport.findOne({ where: { recordId: rec.id }, transaction: t })) return null;
  const aware = typeof rec.data.aware_datetime === 'string' ? new Date(rec.data.aware_datetime) : rec.submittedAt ?? new Date();
  const awareAt = Number.isNaN(aware.getTime()) ? new Date() : aware;
  return SaeReport.create({ studyId: rec.studyId, siteId: rec.siteId, participantId: rec.participantId, recordId: rec.id, awareAt, deadlineAt: new Date(awareAt.getTime() + SAE_HOURS * 3600_000), followedUpAt: null }, { transaction: t });
}

/** E-mails the investigators and the study's safety contact at once (after commit). Nothing arm-revealing. */
export async function notifySae(sae: SaeReport, study: { config: Record<string, unknown> }) {
  const to = new Set(await memberEmails(sae.studyId, sae.siteId, ['investigator']));
  if (typeof study.config.safetyContact === 'string') to.add(study.config.safetyContact);
  if (!to.size) return;
  const p = await Participant.findByPk(sae.participantId);
  try {
    await sendMail({
      to: [...to],
      subject: `Excursion: SERIOUS adverse event for ${p?.subjectCode ?? p?.screeningNumber}`,
      text: `A serious adverse event was recorded for ${p?.subjectCode ?? p?.screeningNumber}.\nSite aware: ${sae.awareAt.toISOString()}\nReport due by: ${sae.deadlineAt.toISOString()} (24 hours).\n\nOpen Excursion to review it.`,
    });
  } catch (e) {
    logger.error({ err: String(e) }, 'SAE e-mail could not be sent');
  }
}

/** SAEs of a study with their deadline; overdue when past the deadline without follow-up. */
export async function saeList(studyId: number, siteIds: number[] | 'all', now = new Date()) {
  const where: Record<string, unknown> = { studyId };
  if (siteIds !== 'all') where.siteId = { [Op.in]: siteIds.length ? siteIds : [0] };
  const rows = await SaeReport.findAll({ where, order: [['deadlineAt', 'ASC']] });
  const ps = await Participant.findAll({ where: { id: { [Op.in]: rows.map((r) => r.participantId).concat(0) } } });
  return rows.map((r) => ({
    id: r.id, recordId: r.recordId, participant: ps.find((p) => p.id === r.participantId)?.subjectCode ?? '', awareAt: r.awareAt.toISOString(), deadlineAt: r.deadlineAt.toISOString(),
    followedUpAt: r.followedUpAt?.toISOString() ?? null, state: r.followedUpAt ? 'followed up' : r.deadlineAt < now ? 'overdue' : 'awaiting follow-up',
  }));
}

/**
 * The investigator records that an SAE has been followed up (reported on and reviewed), with a short note; this stops
 * its clock. Once only; audited. `siteIds` are the sites the investigator may act for.
 */
export async function recordSaeFollowUp(a: { studyId: number; saeId: number; siteIds: number[] | 'all'; note: string; actor: { userId: number; role: Role; requestId?: string } }) {
  return sequelize.transaction(async (t) => {
    const sae = await SaeReport.findOne({ where: { id: a.saeId, studyId: a.studyId }, transaction: t, lock: t.LOCK.UPDATE });
    if (!sae || (a.siteIds !== 'all' && !a.siteIds.includes(sae.siteId))) throw new AppError('not_found', 'The serious adverse event was not found among your sites.');
    // Safety follow-up is still recorded under a soft lock (like answering a query); a hard lock refuses it.
    await assertWritable(a.studyId, sae.siteId, 'query', t);
    if (sae.followedUpAt) throw new AppError('conflict', `This serious adverse event was already followed up on ${sae.followedUpAt.toISOString()}.`);
    const at = new Date();
    await sae.update({ followedUpAt: at }, { transaction: t });
    await appendAudit(t, [{ actorUserId: a.actor.userId, actorRole: a.actor.role, studyId: a.studyId, siteId: sae.siteId, entityType: 'sae', entityId: sae.id, action: 'follow_up', itemPath: '/followedUpAt', oldValue: null, newValue: at.toISOString(), reason: a.note, requestId: a.actor.requestId }]);
    return { id: sae.id, followedUpAt: at.toISOString(), state: 'followed up' as const };
  });
}
