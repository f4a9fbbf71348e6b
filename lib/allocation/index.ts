import 'server-only';
import { randomBytes } from 'node:crypto';
import { Op, QueryTypes, UniqueConstraintError, type Transaction } from 'sequelize';
import seedrandom from 'seedrandom';
import { Allocation, AllocationSlot, CrfRecord, Participant, RandomisationSetup, Site, Upload, User, UnblindingEvent, sequelize } from '@/models';
import { AppError } from '@/lib/errors';
import { appendAudit } from '@/lib/audit';
import { sendMail } from '@/lib/mail';
import { logger } from '@/lib/log';
import { ALGORITHM_VERSION, generateSchedule, minimise, scheduleCommitment, stratumKey, stratumSeed } from '@/lib/randomise';
import { isBlinded } from '@/lib/crf/access';
import { createVisits } from '@/lib/visits';
import { todayIn } from '@/lib/dates';
import { memberEmails } from '@/lib/users/recipients';
import type { Role } from '@/lib/roles';
import { assertWritable } from '@/lib/lock';

type StudyLike = { id: number; code: string; title: string; config: Record<string, unknown> };
type Actor = { userId: number; role: Role; requestId?: string };

/** The study's randomisation settings (study configuration `randomisation`), with the demo's defaults. */
export function randomisationConfig(study: StudyLike) {
  const c = (study.config.randomisation ?? {}) as { method?: 'blocks' | 'minimisation'; blockSizes?: number[]; fingerLevels?: string[]; pBest?: number; subjectPrefix?: string };
  const arms = ((study.config.arms ?? []) as { code: string; label: string; ratio: number }[]).map((a) => ({ code: a.code, ratio: a.ratio, label: a.label }));
  if (arms.length < 2) throw new AppError('conflict', 'The study configuration names fewer than two arms.');
  return { method: c.method ?? 'blocks', blockSizes: c.blockSizes ?? [2, 4, 6], fingerLevels: c.fingerLevels ?? ['1', '2+'], pBest: c.pBest ?? 0.8, subjectPrefix: c.subjectPrefix ?? study.code.split('-')[0], arms };
}

const FACTORS = ['site', 'fingers'];
const fingersLevel = (n: number) => (n >= 2 ? '2+' : '1');

/**
 * Activates randomisation: generates the whole allocation schedule once (stratified permuted blocks, an
 * independent stream per stratum), stores it, and writes a SHA-256 commitment over algorithm version, seed and
 * schedule to the audit trail. The seed and the schedule never leave the server before database lock.
 */
export async function activateRandomisation(a: { study: StudyLike; actor: Actor; perStratum?: number; /** Demo simulation only: a fixed seed makes invented data reproducible. The API never passes it. */ seed?: string }) {
  const cfg = randomisationConfig(a.study);
  const perStratum = a.perStratum ?? 200;
  const sites = await Site.findAll({ where: { studyId: a.study.id }, order: [['code', 'ASC']] });
  const strata = sites.flatMap((s) => cfg.fingerLevels.map((f) => stratumKey({ site: s.code, fingers: f }, FACTORS)));
  const seed = a.seed ?? randomBytes(32).toString('hex');
  const schedule = cfg.method === 'blocks' ? generateSchedule({ studySeed: seed, strata, arms: cfg.arms, blockSizes: cfg.blockSizes, perStratum }) : [];
  const commitment = scheduleCommitment({ algorithmVersion: ALGORITHM_VERSION, seed, schedule });
  try {
    return await sequelize.transaction(async (t) => {
      await assertWritable(a.study.id, null, 'entry', t);
      const setup = await RandomisationSetup.create({ studyId: a.study.id, algorithmVersion: ALGORITHM_VERSION, seed, commitment, perStratum, activatedBy: a.actor.userId, activatedAt: new Date() }, { transaction: t });
      for (let i = 0; i < schedule.length; i += 2000) {
        await AllocationSlot.bulkCreate(
          schedule.slice(i, i + 2000).map((e) => ({ studyId: a.study.id, stratum: e.stratum, slot: e.slot, arm: e.arm, block: e.block, blockSize: e.blockSize, participantId: null, usedAt: null })),
          { transaction: t },
        );
      }
      await appendAudit(t, [{ actorUserId: a.actor.userId, actorRole: a.actor.role, studyId: a.study.id, entityType: 'randomisation', entityId: a.study.id, action: 'activate', newValue: { algorithmVersion: ALGORITHM_VERSION, method: cfg.method, strata: strata.length, perStratum, commitment }, requestId: a.actor.requestId }]);
      return { commitment, algorithmVersion: ALGORITHM_VERSION, method: cfg.method, strata: strata.length, perStratum, activatedAt: setup.activatedAt.toISOString() };
    });
  } catch (e) {
    if (e instanceof UniqueConstraintError) throw new AppError('conflict', 'Randomisation is already active for this study; the schedule is generated only once.');
    throw e;
  }
}

/** What the data manager may see about activation (never the seed or the schedule). */
export async function randomisationStatus(studyId: number) {
  const s = await RandomisationSetup.findOne({ where: { studyId } });
  if (!s) return { active: false as const };
  const used = await AllocationSlot.count({ where: { studyId, participantId: { [Op.ne]: null } } });
  return { active: true as const, algorithmVersion: s.algorithmVersion, commitment: s.commitment, perStratum: s.perStratum, activatedAt: s.activatedAt.toISOString(), allocated: used };
}

async function submitted(participantId: number, formKey: string, t?: Transaction) {
  return CrfRecord.findOne({ where: { participantId, formKey, status: 'submitted' }, transaction: t });
}

/** Reasons a participant cannot be randomised yet; empty when everything is in place. */
export async function randomisationBlockers(p: Participant, t?: Transaction): Promise<string[]> {
  const out: string[] = [];
  if (p.subjectCode || (await Allocation.findOne({ where: { participantId: p.id }, transaction: t }))) return ['The participant is already randomised.'];
  if (p.screeningOutcome !== 'eligible') out.push(p.screeningOutcome === 'pending' ? 'Eligibility has not been confirmed (submit the eligibility form).' : `The participant is not eligible (${p.screeningOutcome.replace('_', ' ')}).`);
  const consent = await submitted(p.id, 'consent', t);
  const fileId = consent?.data.consent_file_id;
  if (!consent) out.push('Informed consent has not been recorded (submit the consent form).');
  else if (typeof fileId !== 'string' || !(await Upload.findOne({ where: { publicId: fileId, participantId: p.id, purpose: 'consent' }, transaction: t }))) out.push('The signed consent form has not been uploaded.');
  if (!(await submitted(p.id, 'baseline', t))) out.push('The baseline form is not submitted.');
  if (!(await submitted(p.id, 'operation', t))) out.push('The injury and operation form is not submitted.');
  return out;
}

/** What the confirmation step restates before randomising. */
export async function randomisationReadiness(studyId: number, siteId: number, participantId: number) {
  const p = await Participant.findOne({ where: { id: participantId, studyId, siteId } });
  if (!p) throw new AppError('not_found', 'The participant was not found at this site.');
  return { screeningNumber: p.screeningNumber, eligibility: p.screeningOutcome, reasons: p.screeningReasons ?? [], blockers: await randomisationBlockers(p) };
}

/** The view of an allocation for unblinded readers. */
export type AllocationView = { arm: string; armLabel: string; subjectCode: string; allocatedAt: string };

/**
 * Randomises one participant in one transaction: the site row and the participant are locked, the next unused
 * slot of the stratum is taken with SELECT … FOR UPDATE and marked used, the allocation and the study ID are
 * written and audited. Unique constraints on slot and participant make a double allocation impossible.
 */
export async function randomiseParticipant(a: { study: StudyLike; site: Site; participantId: number; actor: Actor; /** Demo simulation only: the simulated time of randomisation. The API never passes it. */ at?: Date }): Promise<AllocationView> {
  const cfg = randomisationConfig(a.study);
  const setup = await RandomisationSetup.findOne({ where: { studyId: a.study.id } });
  if (!setup) throw new AppError('conflict', 'Randomisation has not been activated for this study yet. Ask the data manager.');
  let view: AllocationView;
  try {
    view = await sequelize.transaction(async (t) => {
      await assertWritable(a.study.id, a.site.id, 'entry', t);
      await Site.findByPk(a.site.id, { transaction: t, lock: t.LOCK.UPDATE });
      const p = await Participant.findOne({ where: { id: a.participantId, studyId: a.study.id, siteId: a.site.id }, transaction: t, lock: t.LOCK.UPDATE });
      if (!p) throw new AppError('not_found', 'The participant was not found at this site.');
      const blockers = await randomisationBlockers(p, t);
      if (blockers.length) throw new AppError('conflict', `This participant cannot be randomised yet: ${blockers.join(' ')}`, { details: { reasons: blockers } });
      const op = await submitted(p.id, 'operation', t);
      const fingers = fingersLevel(Number(op!.derived.n_injured_fingers ?? (Array.isArray(op!.data.fingers) ? op!.data.fingers.length : 1)));
      const stratum = stratumKey({ site: a.site.code, fingers }, FACTORS);
      let slot: AllocationSlot | null;
      if (cfg.method === 'minimisation') {
        slot = await minimisedSlot(a.study, setup.seed, cfg, stratum, { site: a.site.code, fingers }, t);
      } else {
        slot = await AllocationSlot.findOne({ where: { studyId: a.study.id, stratum, participantId: null }, order: [['slot', 'ASC']], transaction: t, lock: t.LOCK.UPDATE });
      }
      if (!slot) throw new AppError('conflict', `The allocation schedule for stratum ${stratum} is used up. Ask the data manager.`);
      const now = a.at ?? new Date();
      await slot.update({ participantId: p.id, usedAt: now }, { transaction: t });
      await Allocation.create({ studyId: a.study.id, siteId: a.site.id, participantId: p.id, slotId: slot.id, stratum, arm: slot.arm, allocatedBy: a.actor.userId, allocatedAt: now }, { transaction: t });
      const [{ n }] = await sequelize.query<{ n: number }>('SELECT COUNT(*) AS n FROM allocations WHERE site_id = ?', { replacements: [a.site.id], type: QueryTypes.SELECT, transaction: t });
      const subjectCode = `${cfg.subjectPrefix}-${a.site.code}-${String(Number(n)).padStart(3, '0')}`;
      const oldStatus = p.status;
      await p.update({ subjectCode, status: 'randomised' }, { transaction: t });
      const day0 = typeof op!.data.REPDAT === 'string' ? op!.data.REPDAT : null;
      if (day0) await createVisits(t, a.study, p, day0, { randomisedOn: todayIn(a.site.timeZone, now) });
      await appendAudit(t, [
        { actorUserId: a.actor.userId, actorRole: a.actor.role, studyId: a.study.id, siteId: a.site.id, entityType: 'allocation', entityId: p.id, action: 'randomise', newValue: { stratum, slot: slot.slot, arm: slot.arm }, requestId: a.actor.requestId },
        { actorUserId: a.actor.userId, actorRole: a.actor.role, studyId: a.study.id, siteId: a.site.id, entityType: 'participant', entityId: p.id, action: 'update', itemPath: '/subjectCode', oldValue: null, newValue: subjectCode, requestId: a.actor.requestId },
        { actorUserId: a.actor.userId, actorRole: a.actor.role, studyId: a.study.id, siteId: a.site.id, entityType: 'participant', entityId: p.id, action: 'update', itemPath: '/status', oldValue: oldStatus, newValue: 'randomised', requestId: a.actor.requestId },
      ]);
      return { arm: slot.arm, armLabel: cfg.arms.find((x) => x.code === slot!.arm)?.label ?? slot.arm, subjectCode, allocatedAt: now.toISOString() };
    });
  } catch (e) {
    if (e instanceof UniqueConstraintError) throw new AppError('conflict', 'This participant is already randomised.');
    throw e;
  }
  await notifyTherapists(a.study, a.site, view);
  return view;
}

/** Minimisation: the arm is chosen from the earlier allocations; the slot row records it for the audit of use. */
async function minimisedSlot(study: StudyLike, seed: string, cfg: ReturnType<typeof randomisationConfig>, stratum: string, levels: Record<string, string>, t: Transaction) {
  await RandomisationSetup.findOne({ where: { studyId: study.id }, transaction: t, lock: t.LOCK.UPDATE });
  const earlier = await Allocation.findAll({ where: { studyId: study.id }, transaction: t });
  const existing = earlier.map((e) => {
    const parts = Object.fromEntries(e.stratum.split('|').map((kv) => kv.split('=')));
    return { arm: e.arm, levels: parts as Record<string, string> };
  });
  // One stream per allocation number, derived from the secret seed: reproducible, not predictable.
  const rng = seedrandom(stratumSeed(seed, `allocation#${earlier.length + 1}`));
  const r = minimise({ arms: cfg.arms, factors: FACTORS.map((name) => ({ name, weight: 1 })), existing, participant: levels, pBest: cfg.pBest, rng: () => rng() });
  const next = (await AllocationSlot.max<number, AllocationSlot>('slot', { where: { studyId: study.id, stratum }, transaction: t })) ?? 0;
  return AllocationSlot.create({ studyId: study.id, stratum, slot: next + 1, arm: r.arm, block: 0, blockSize: 0, participantId: null, usedAt: null }, { transaction: t });
}

/** The site's therapists are told the allocation (they are unblinded by role). */
async function notifyTherapists(study: StudyLike, site: Site, v: AllocationView) {
  const to = await memberEmails(study.id, site.id, ['therapist']);
  if (!to.length) return;
  try {
    await sendMail({ to, subject: `Excursion: ${v.subjectCode} randomised`, text: `${v.subjectCode} at ${site.code} was randomised to ${v.armLabel} (${v.arm}).\nStart the programme as the protocol describes.\n\nThis message is for unblinded therapy staff only. Do not forward it to outcome assessors.` });
  } catch (e) {
    logger.error({ err: String(e) }, 'allocation e-mail could not be sent');
  }
}

/** The allocation of a participant for this reader, or null when the reader is blinded or none exists. */
export async function allocationFor(study: StudyLike, participantId: number, roles: Role[]): Promise<AllocationView | null> {
  if (isBlinded(roles, study.config)) return null;
  const al = await Allocation.findOne({ where: { participantId } });
  if (!al) return null;
  const p = await Participant.findByPk(participantId);
  const cfg = randomisationConfig(study);
  return { arm: al.arm, armLabel: cfg.arms.find((x) => x.code === al.arm)?.label ?? al.arm, subjectCode: p!.subjectCode ?? '', allocatedAt: al.allocatedAt.toISOString() };
}

/** Arms of many participants at once (lists), for unblinded readers only. */
export async function armsFor(study: StudyLike, participantIds: number[], roles: Role[]): Promise<Map<number, string> | null> {
  if (isBlinded(roles, study.config)) return null;
  const rows = await Allocation.findAll({ where: { participantId: { [Op.in]: participantIds.length ? participantIds : [0] } } });
  return new Map(rows.map((r) => [r.participantId, r.arm]));
}

/**
 * Emergency unblinding: reveals one participant's allocation to an allowed role with a reason; audited,
 * entered in the unblinding register, the participant flagged, and the data managers e-mailed.
 */
export async function emergencyUnblind(a: { study: StudyLike; site: Site; participantId: number; reason: string; actor: Actor }): Promise<AllocationView> {
  const allowed = ((a.study.config.unblindingRoles as Role[] | undefined) ?? ['investigator']) as Role[];
  if (!allowed.includes(a.actor.role)) throw new AppError('forbidden', 'Your role may not unblind allocations in this study.');
  const cfg = randomisationConfig(a.study);
  const view = await sequelize.transaction(async (t) => {
    // Emergency unblinding is a safety action: a soft lock lets it through, a hard lock does not.
    await assertWritable(a.study.id, a.site.id, 'admin', t);
    const p = await Participant.findOne({ where: { id: a.participantId, studyId: a.study.id, siteId: a.site.id }, transaction: t, lock: t.LOCK.UPDATE });
    if (!p) throw new AppError('not_found', 'The participant was not found at this site.');
    const al = await Allocation.findOne({ where: { participantId: p.id }, transaction: t });
    if (!al) throw new AppError('conflict', 'The participant has not been randomised; there is nothing to unblind.');
    const now = new Date();
    await UnblindingEvent.create({ studyId: a.study.id, siteId: a.site.id, participantId: p.id, userId: a.actor.userId, role: a.actor.role, reason: a.reason, at: now }, { transaction: t });
    if (!p.unblindedAt) await p.update({ unblindedAt: now }, { transaction: t });
    await appendAudit(t, [{ actorUserId: a.actor.userId, actorRole: a.actor.role, studyId: a.study.id, siteId: a.site.id, entityType: 'allocation', entityId: p.id, action: 'emergency_unblind', reason: a.reason, requestId: a.actor.requestId }]);
    return { arm: al.arm, armLabel: cfg.arms.find((x) => x.code === al.arm)?.label ?? al.arm, subjectCode: p.subjectCode ?? '', allocatedAt: al.allocatedAt.toISOString() };
  });
  const dms = await memberEmails(a.study.id, a.site.id, ['data_manager']);
  if (dms.length) {
    try {
      // The message says that an unblinding happened, never which arm.
      await sendMail({ to: dms, subject: `Excursion: emergency unblinding of ${view.subjectCode}`, text: `The allocation of ${view.subjectCode} at ${a.site.code} was revealed by emergency unblinding.\nReason given: ${a.reason}\n\nThe event is in the unblinding register.` });
    } catch (e) {
      logger.error({ err: String(e) }, 'unblinding e-mail could not be sent');
    }
  }
  return view;
}

/** The unblinding register of a study (who, when, why; never the arm). */
export async function unblindingRegister(studyId: number) {
  const rows = await UnblindingEvent.findAll({ where: { studyId }, order: [['id', 'DESC']] });
  const ps = await Participant.findAll({ where: { id: { [Op.in]: rows.map((r) => r.participantId).concat(0) } } });
  const users = await User.findAll({ where: { id: { [Op.in]: rows.map((r) => r.userId).concat(0) } } });
  return rows.map((r) => ({ id: r.id, subjectCode: ps.find((p) => p.id === r.participantId)?.subjectCode ?? '', by: users.find((u) => u.id === r.userId)?.name ?? '', role: r.role, reason: r.reason, at: r.at.toISOString() }));
}
