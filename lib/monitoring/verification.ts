import 'server-only';
import { createHash } from 'node:crypto';
import stableStringify from 'fast-json-stable-stringify';
import { Op, QueryTypes, type Transaction } from 'sequelize';
import { CrfRecord, Signature, User, Verification, sequelize } from '@/models';
import { AppError } from '@/lib/errors';
import { appendAudit } from '@/lib/audit';
import { checkPassword } from '@/lib/auth/password';
import { assertWritable } from '@/lib/lock';

type Actor = { userId: number; role: string; requestId?: string };

/** A monitor marks one item (JSON Pointer) or the whole form ('') of a record as verified against source. */
export async function verifyItem(a: { studyId: number; siteId: number; recordId: number; itemPath: string; actor: Actor }) {
  if (a.actor.role !== 'monitor') throw new AppError('forbidden', 'Source data verification is done by monitors.');
  return sequelize.transaction(async (t) => {
    await assertWritable(a.studyId, a.siteId, 'entry', t);
    const rec = await CrfRecord.findOne({ where: { id: a.recordId, studyId: a.studyId, siteId: a.siteId }, transaction: t });
    if (!rec) throw new AppError('not_found', 'The record was not found at this site.');
    if (rec.status !== 'submitted') throw new AppError('conflict', 'Only submitted forms can be verified.');
    const existing = await Verification.findOne({ where: { recordId: rec.id, itemPath: a.itemPath, clearedAt: { [Op.is]: null } }, transaction: t });
    if (existing) return { recordId: rec.id, itemPath: a.itemPath, verifiedAt: existing.verifiedAt.toISOString() };
    const v = await Verification.create({ recordId: rec.id, itemPath: a.itemPath, verifiedBy: a.actor.userId, verifiedAt: new Date(), clearedAt: null, clearedReason: null }, { transaction: t });
    await appendAudit(t, [{ actorUserId: a.actor.userId, actorRole: a.actor.role, studyId: a.studyId, siteId: a.siteId, entityType: 'verification', entityId: rec.id, action: 'verify', itemPath: a.itemPath || null, newValue: true, requestId: a.actor.requestId }]);
    return { recordId: rec.id, itemPath: a.itemPath, verifiedAt: v.verifiedAt.toISOString() };
  });
}

/** Clears verifications a change touches (the changed items and the whole-form mark), audited, in the save's transaction. */
export async function clearVerifications(t: Transaction, rec: CrfRecord, changedPaths: string[]) {
  // Most saves touch records nobody has verified yet: a plain locking read answers that before any model is built.
  const ids = await sequelize.query<{ id: number }>('SELECT id FROM verifications WHERE record_id = ? AND cleared_at IS NULL FOR UPDATE', { replacements: [rec.id], type: QueryTypes.SELECT, transaction: t });
  if (ids.length === 0) return;
  const vs = await Verification.findAll({ where: { id: ids.map((r) => Number(r.id)) }, transaction: t });
  const hit = vs.filter((v) => v.itemPath === '' || changedPaths.some((p) => p === v.itemPath || p.startsWith(`${v.itemPath}/`)));
  for (const v of hit) {
    await v.update({ clearedAt: new Date(), clearedReason: 'the item changed after verification' }, { transaction: t });
    await appendAudit(t, [{ actorUserId: null, actorRole: 'system', studyId: rec.studyId, siteId: rec.siteId, entityType: 'verification', entityId: rec.id, action: 'clear', itemPath: v.itemPath || null, oldValue: true, newValue: false, reason: 'the item changed after verification' }]);
  }
}

/** Current verification marks of a record. */
export async function verificationsOf(recordId: number) {
  const vs = await Verification.findAll({ where: { recordId }, order: [['id', 'ASC']] });
  return vs.map((v) => ({ itemPath: v.itemPath, verifiedAt: v.verifiedAt.toISOString(), cleared: v.clearedAt !== null, clearedAt: v.clearedAt?.toISOString() ?? null }));
}

/** SHA-256 over a participant's records (id, form, version, status, values): what a casebook signature covers. */
export async function casebookHash(participantId: number, t?: Transaction): Promise<string> {
  const recs = await CrfRecord.findAll({ where: { participantId }, order: [['id', 'ASC']], transaction: t });
  const content = recs.map((r) => ({ id: r.id, form: r.formKey, version: r.formVersion, visit: r.visitKey, instance: r.instance, status: r.status, data: r.data, derived: r.derived }));
  return createHash('sha256').update(stableStringify(content)).digest('hex');
}

export const SIGNATURE_MEANING = 'I confirm these data are accurate and complete.';

/** The investigator signs a casebook by re-entering their password; name, meaning, UTC time and content hash are stored. */
export async function signCasebook(a: { studyId: number; siteId: number; participantId: number; password: string; actor: Actor }) {
  if (a.actor.role !== 'investigator') throw new AppError('forbidden', 'Only investigators sign casebooks.');
  const user = await User.findByPk(a.actor.userId);
  if (!user?.passwordHash || !(await checkPassword(a.password, user.passwordHash))) throw new AppError('unauthenticated', 'The password is not right; the casebook was not signed.');
  return sequelize.transaction(async (t) => {
    await assertWritable(a.studyId, a.siteId, 'entry', t);
    const hash = await casebookHash(a.participantId, t);
    const s = await Signature.create({ studyId: a.studyId, siteId: a.siteId, participantId: a.participantId, signerUserId: user.id, signerName: user.name, meaning: SIGNATURE_MEANING, signedAt: new Date(), contentHash: hash, status: 'valid', invalidatedAt: null, invalidatedReason: null }, { transaction: t });
    await appendAudit(t, [{ actorUserId: user.id, actorRole: 'investigator', studyId: a.studyId, siteId: a.siteId, entityType: 'signature', entityId: s.id, action: 'sign', newValue: { participantId: a.participantId, meaning: SIGNATURE_MEANING, contentHash: hash, signer: user.name }, requestId: a.actor.requestId }]);
    return presentSignature(s);
  });
}

export const presentSignature = (s: Signature) => ({ id: s.id, signer: s.signerName, meaning: s.meaning, signedAt: s.signedAt.toISOString(), contentHash: s.contentHash, status: s.status, invalidatedAt: s.invalidatedAt?.toISOString() ?? null, invalidatedReason: s.invalidatedReason });

/** A change to signed data marks the participant's valid signatures invalid (audited) until signed again. */
export async function invalidateSignatures(t: Transaction, rec: CrfRecord) {
  // Most saves come before any signature: a plain locking read answers that before any model is built.
  const ids = await sequelize.query<{ id: number }>("SELECT id FROM signatures WHERE participant_id = ? AND status = 'valid' FOR UPDATE", { replacements: [rec.participantId], type: QueryTypes.SELECT, transaction: t });
  if (ids.length === 0) return;
  const ss = await Signature.findAll({ where: { id: ids.map((r) => Number(r.id)) }, transaction: t });
  for (const s of ss) {
    const reason = `${rec.formKey} changed after signing`;
    await s.update({ status: 'invalidated', invalidatedAt: new Date(), invalidatedReason: reason }, { transaction: t });
    await appendAudit(t, [{ actorUserId: null, actorRole: 'system', studyId: s.studyId, siteId: s.siteId, entityType: 'signature', entityId: s.id, action: 'invalidate', itemPath: '/status', oldValue: 'valid', newValue: 'invalidated', reason }]);
  }
}

export async function signaturesOf(participantId: number) {
  return (await Signature.findAll({ where: { participantId }, order: [['id', 'DESC']] })).map(presentSignature);
}
