import 'server-only';
import { AppError } from '@/lib/errors';
import { logAccess } from '@/lib/access-log';
import { exportQuery } from '@/lib/schemas';
import { startExport } from '@/exports';
import { getSnapshot, SNAPSHOT_READ_ROLES } from './index';
import { readManifest } from './read';

export { SNAPSHOT_READ_ROLES };

/** A snapshot with its stored manifest (files, rows, SHA-256) and the commitment check made when it was taken. */
export async function snapshotDetail(studyId: number, snapshotId: number) {
  const s = await getSnapshot(studyId, snapshotId);
  const manifest = await readManifest(s.storagePrefix);
  return { ...s, manifest };
}

/**
 * Checks the export request (format, profile), writes the download to the access log and starts the stream.
 * The log row is written before any byte is sent, so every download is on record.
 */
export async function openExport(a: { studyId: number; studyCode: string; snapshotId: number; query: Record<string, string>; userId: number; email: string; ip?: string | null; userAgent?: string | null; requestId: string }) {
  const parsed = exportQuery.safeParse(a.query);
  if (!parsed.success) {
    const fields: Record<string, string> = {};
    for (const i of parsed.error.issues) {
      if (i.code === 'unrecognized_keys') for (const k of i.keys) fields[k] = 'This parameter is not allowed here.';
      else fields[i.path.join('.') || '(query)'] = i.message;
    }
    throw new AppError('validation_failed', `Some parameters need attention: ${Object.keys(fields).join(', ')}.`, { fields });
  }
  const s = await getSnapshot(a.studyId, a.snapshotId);
  const f = await startExport({ snapshot: s, format: parsed.data.format, profile: parsed.data.profile, studyCode: a.studyCode });
  try {
    await logAccess({
      event: 'export', userId: a.userId, email: a.email, ip: a.ip ?? null, userAgent: a.userAgent ?? null, requestId: a.requestId,
      detail: { studyId: a.studyId, snapshot: s.id, snapshotHash: s.snapshotHash, format: parsed.data.format, profile: parsed.data.profile, filename: f.filename },
    });
  } catch (e) {
    // No log row, no download.
    f.stream.destroy();
    throw e;
  }
  return { ...f, snapshotHash: s.snapshotHash };
}
