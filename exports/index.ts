// One entry point for the download route and the benchmark: a snapshot, a format and a profile → a byte stream.
import { PassThrough, type Readable } from 'node:stream';
import type { SnapshotView } from '@/lib/snapshot';
import { loadContext, PROFILES, type Profile } from './source';
import { writeXlsx } from './xlsx';
import { writeCsvZip } from './csv';
import { writeOdm } from './odm';

export const FORMATS = ['xlsx', 'csv', 'odm'] as const;
export type ExportFormat = (typeof FORMATS)[number];
export { PROFILES, type Profile };

const TYPES: Record<ExportFormat, { contentType: string; ext: string }> = {
  xlsx: { contentType: 'application/vnd.openxmlformats-officedocument.spreadsheetml.sheet', ext: 'xlsx' },
  csv: { contentType: 'application/zip', ext: 'csv.zip' },
  odm: { contentType: 'application/xml', ext: 'odm.xml' },
};

/**
 * Starts an export of a stored snapshot. The small files are read before this returns (so a missing snapshot fails
 * here); the body is then produced as the returned stream is read. A failure later destroys the stream.
 */
export async function startExport(a: { snapshot: SnapshotView; format: ExportFormat; profile: Profile; studyCode: string }) {
  const ctx = await loadContext(a.snapshot, a.snapshot.storagePrefix, a.profile);
  const out = new PassThrough({ highWaterMark: 256 * 1024 });
  const writer = a.format === 'xlsx' ? writeXlsx : a.format === 'csv' ? writeCsvZip : writeOdm;
  writer(ctx, out).catch((e) => out.destroy(e instanceof Error ? e : new Error(String(e))));
  const t = TYPES[a.format];
  return { stream: out as Readable, contentType: t.contentType, filename: `${a.studyCode}-snapshot-${a.snapshot.id}-${a.profile}.${t.ext}` };
}
