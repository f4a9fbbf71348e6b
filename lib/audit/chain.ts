import { createHash } from 'node:crypto';
import stableStringify from 'fast-json-stable-stringify';

/** The fields of an audit row that its hash covers (everything but the auto-increment id and the hash itself). */
export type AuditHashed = {
  at: string;
  actorUserId: number | null;
  actorRole: string | null;
  studyId: number | null;
  siteId: number | null;
  entityType: string;
  entityId: string;
  action: string;
  itemPath: string | null;
  oldValue: string | null;
  newValue: string | null;
  reason: string | null;
  requestId: string | null;
  /** Present only on CRF item changes; absent from the hashed object otherwise, so older rows keep their hashes. */
  formVersion?: number;
  prevHash: string;
};

export const GENESIS_HASH = '0'.repeat(64);

/** hash = SHA-256(previous hash + canonical JSON of the row); canonical = keys sorted, no whitespace. */
export function auditHash(row: AuditHashed): string {
  const canonical = stableStringify(row);
  return createHash('sha256').update(row.prevHash).update(canonical).digest('hex');
}

/** Serialises a value for the old/new columns: absent stays null, everything else is JSON. */
export function auditValue(v: unknown): string | null {
  return v === undefined ? null : JSON.stringify(v);
}
