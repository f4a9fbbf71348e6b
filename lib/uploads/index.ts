import 'server-only';
import { createHash, randomBytes } from 'node:crypto';
import FileType from 'file-type';
import { Participant, Upload, sequelize } from '@/models';
import { AppError } from '@/lib/errors';
import { appendAudit } from '@/lib/audit';
import { logAccess } from '@/lib/access-log';
import { getObject, putObject } from '@/lib/storage';
import type { Role } from '@/lib/roles';
import { assertWritable } from '@/lib/lock';

export const MAX_UPLOAD_BYTES = 10 * 1024 * 1024;
const ALLOWED: Record<string, string> = { 'application/pdf': 'pdf', 'image/png': 'png', 'image/jpeg': 'jpg' };
/** Who may download a site's signed consent forms: that site's staff, data managers and monitors. */
export const DOWNLOAD_ROLES: Role[] = ['coordinator', 'therapist', 'investigator', 'data_manager', 'monitor'];

export type UploadView = { id: string; sha256: string; sizeBytes: number; mime: string; createdAt: string };

/**
 * Stores a signed consent form: the type is detected from the bytes (not the name), PDF, PNG or JPEG up to 10 MB;
 * the SHA-256 is kept; the object goes to S3-compatible storage under a key the server chooses. Bad files are
 * refused before anything is stored.
 */
export async function storeConsentUpload(a: { studyId: number; siteId: number; participantId: number; bytes: Buffer; actor: { userId: number; role: Role; requestId?: string } }): Promise<UploadView> {
  if (a.bytes.length === 0) throw new AppError('bad_request', 'The file is empty.');
  if (a.bytes.length > MAX_UPLOAD_BYTES) throw new AppError('payload_too_large', 'The file is larger than 10 MB.');
  const p = await Participant.findOne({ where: { id: a.participantId, studyId: a.studyId, siteId: a.siteId } });
  if (!p) throw new AppError('not_found', 'The participant was not found at this site.');
  const type = await FileType.fromBuffer(a.bytes);
  const ext = type ? ALLOWED[type.mime] : undefined;
  if (!type || !ext) throw new AppError('unsupported_media_type', `The file is not a PDF, PNG or JPEG${type ? ` (its content is ${type.mime})` : ''}. Scan the signed form to one of these.`);
  const sha256 = createHash('sha256').update(a.bytes).digest('hex');
  const publicId = randomBytes(16).toString('base64url');
  const objectKey = `studies/${a.studyId}/sites/${a.siteId}/participants/${p.id}/consent/${publicId}.${ext}`;
  // Checked before storing too, so a locked study gets no stray object; checked again under the transaction below.
  await assertWritable(a.studyId, a.siteId, 'entry');
  await putObject(objectKey, a.bytes, type.mime, sha256);
  return sequelize.transaction(async (t) => {
    await assertWritable(a.studyId, a.siteId, 'entry', t);
    const u = await Upload.create({ publicId, studyId: a.studyId, siteId: a.siteId, participantId: p.id, purpose: 'consent', objectKey, sha256, sizeBytes: a.bytes.length, mime: type.mime, uploadedBy: a.actor.userId }, { transaction: t });
    await appendAudit(t, [{ actorUserId: a.actor.userId, actorRole: a.actor.role, studyId: a.studyId, siteId: a.siteId, entityType: 'upload', entityId: u.publicId, action: 'create', newValue: { participantId: p.id, purpose: 'consent', sha256, sizeBytes: u.sizeBytes, mime: u.mime }, requestId: a.actor.requestId }]);
    return { id: u.publicId, sha256, sizeBytes: u.sizeBytes, mime: u.mime, createdAt: u.createdAt.toISOString() };
  });
}

/** Reads an upload of this site for an allowed reader and records the download in the access log. */
export async function downloadUpload(a: { studyId: number; siteId: number; publicId: string; userId: number; ip?: string | null; requestId?: string }) {
  if (!/^[A-Za-z0-9_-]{8,64}$/.test(a.publicId)) throw new AppError('not_found', 'The file was not found.');
  const u = await Upload.findOne({ where: { publicId: a.publicId, studyId: a.studyId, siteId: a.siteId } });
  if (!u) throw new AppError('not_found', 'The file was not found.');
  const bytes = await getObject(u.objectKey);
  if (createHash('sha256').update(bytes).digest('hex') !== u.sha256) throw new AppError('conflict', 'The stored file does not match its recorded SHA-256; it was not sent. Tell the data manager.');
  await logAccess({ event: 'download', userId: a.userId, ip: a.ip ?? null, requestId: a.requestId, detail: { upload: u.publicId, participantId: u.participantId, sha256: u.sha256 } });
  return { bytes, mime: u.mime, filename: `consent-${u.participantId}-${u.publicId.slice(0, 8)}.${ALLOWED[u.mime]}` };
}

/** Uploads of one participant (metadata only). */
export async function participantUploads(participantId: number): Promise<UploadView[]> {
  const rows = await Upload.findAll({ where: { participantId }, order: [['id', 'ASC']] });
  return rows.map((u) => ({ id: u.publicId, sha256: u.sha256, sizeBytes: u.sizeBytes, mime: u.mime, createdAt: u.createdAt.toISOString() }));
}
