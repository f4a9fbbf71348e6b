import 'server-only';
import { QueryTypes, type Transaction, type Sequelize } from 'sequelize';
import { auditHash, auditValue, GENESIS_HASH, type AuditHashed } from './chain';

export { auditValue, GENESIS_HASH } from './chain';

/** What the caller says about one audited change; time and chain links are added here. */
export type AuditInput = {
  actorUserId: number | null;
  actorRole: string | null;
  studyId?: number | null;
  siteId?: number | null;
  entityType: string;
  entityId: string | number;
  action: string;
  itemPath?: string | null;
  oldValue?: unknown;
  newValue?: unknown;
  reason?: string | null;
  requestId?: string | null;
  formVersion?: number | null;
};

/** Test seam: when set, the next audit insert fails (used by the rollback tests in the test process only). */
export const auditFaults = { failNext: false };

/** Audit rows waiting to be chained when their transaction is about to commit (see auditedTransaction). */
const pending = new WeakMap<Transaction, AuditInput[]>();

/**
 * A managed transaction whose audit rows are chained in one short last step, just before it commits: appendAudit
 * inside it only collects the rows. The chain head row is locked only for that step (three statements and the commit)
 * instead of from the first audit row to the commit, so concurrent saves wait for each other for less time. The rows
 * still commit or roll back with the change they describe, and the chain is the same as with immediate appends.
 */
export async function auditedTransaction<T>(sequelize: Sequelize, fn: (t: Transaction) => Promise<T>): Promise<T> {
  return sequelize.transaction(async (t) => {
    pending.set(t, []);
    const out = await fn(t);
    const rows = pending.get(t) ?? [];
    pending.delete(t);
    await writeChained(t, rows);
    return out;
  });
}

/**
 * Appends audit rows inside the caller's transaction: at once (the chain head row is locked first, so concurrent
 * transactions append one after another), or, inside auditedTransaction, just before the commit. Either way a
 * rollback takes the audit rows with it. The time is MariaDB's UTC clock with microseconds, never a client's.
 */
export async function appendAudit(t: Transaction, rows: AuditInput[]): Promise<void> {
  if (rows.length === 0) return;
  const later = pending.get(t);
  if (later) {
    later.push(...rows);
    return;
  }
  await writeChained(t, rows);
}

async function writeChained(t: Transaction, rows: AuditInput[]): Promise<void> {
  if (rows.length === 0) return;
  const sequelize = (t as unknown as { sequelize: Sequelize }).sequelize;
  const [head] = await sequelize.query<{ hash: string; now: string }>(
    "SELECT hash, DATE_FORMAT(UTC_TIMESTAMP(6), '%Y-%m-%d %H:%i:%s.%f') AS now FROM audit_chain_head WHERE id = 1 FOR UPDATE",
    { type: QueryTypes.SELECT, transaction: t },
  );
  if (!head) throw new Error('audit chain head is missing (migrations not applied?)');
  let prev = head.hash;
  const values: unknown[] = [];
  for (const r of rows) {
    const hashed: AuditHashed = {
      at: head.now,
      actorUserId: r.actorUserId,
      actorRole: r.actorRole,
      studyId: r.studyId ?? null,
      siteId: r.siteId ?? null,
      entityType: r.entityType,
      entityId: String(r.entityId),
      action: r.action,
      itemPath: r.itemPath ?? null,
      oldValue: auditValue(r.oldValue),
      newValue: auditValue(r.newValue),
      reason: r.reason ?? null,
      requestId: r.requestId ?? null,
      ...(r.formVersion != null ? { formVersion: r.formVersion } : {}),
      prevHash: prev,
    };
    const hash = auditHash(hashed);
    values.push(
      hashed.at, hashed.actorUserId, hashed.actorRole, hashed.studyId, hashed.siteId, hashed.entityType, hashed.entityId,
      hashed.action, hashed.itemPath, hashed.oldValue, hashed.newValue, hashed.reason, hashed.requestId, hashed.formVersion ?? null, hashed.prevHash, hash,
    );
    prev = hash;
  }
  if (auditFaults.failNext) {
    auditFaults.failNext = false;
    throw new Error('injected audit failure');
  }
  const placeholders = rows.map(() => '(?,?,?,?,?,?,?,?,?,?,?,?,?,?,?,?)').join(',');
  await sequelize.query(
    `INSERT INTO audit_events (at, actor_user_id, actor_role, study_id, site_id, entity_type, entity_id, action, item_path, old_value, new_value, reason, request_id, form_version, prev_hash, hash) VALUES ${placeholders}`,
    { replacements: values, transaction: t, type: QueryTypes.INSERT },
  );
  await sequelize.query('UPDATE audit_chain_head SET hash = ?, last_id = LAST_INSERT_ID() + ? WHERE id = 1', {
    replacements: [prev, rows.length - 1],
    transaction: t,
  });
}

export type ChainReport = { ok: boolean; checked: number; firstBroken?: { id: number; problem: string } };

type Row = {
  id: number | string; at: string; actor_user_id: number | null; actor_role: string | null; study_id: number | null; site_id: number | null;
  entity_type: string; entity_id: string; action: string; item_path: string | null; old_value: string | null; new_value: string | null;
  reason: string | null; request_id: string | null; form_version: number | null; prev_hash: string; hash: string;
};

/** Walks the whole chain in id order and reports the first row whose link or hash does not verify. */
export async function verifyAuditChain(sequelize: Sequelize, batch = 5000): Promise<ChainReport> {
  let prev = GENESIS_HASH;
  let lastId = 0;
  let checked = 0;
  for (;;) {
    const rows = await sequelize.query<Row>(
      `SELECT id, DATE_FORMAT(at, '%Y-%m-%d %H:%i:%s.%f') AS at, actor_user_id, actor_role, study_id, site_id, entity_type, entity_id, action,
              item_path, old_value, new_value, reason, request_id, form_version, prev_hash, hash
         FROM audit_events WHERE id > ? ORDER BY id LIMIT ?`,
      { replacements: [lastId, batch], type: QueryTypes.SELECT },
    );
    if (rows.length === 0) break;
    for (const r of rows) {
      const id = Number(r.id);
      if (r.prev_hash !== prev) return { ok: false, checked, firstBroken: { id, problem: 'its previous-hash link does not match the row before it' } };
      const want = auditHash({
        at: r.at, actorUserId: r.actor_user_id === null ? null : Number(r.actor_user_id), actorRole: r.actor_role,
        studyId: r.study_id === null ? null : Number(r.study_id), siteId: r.site_id === null ? null : Number(r.site_id),
        entityType: r.entity_type, entityId: r.entity_id, action: r.action, itemPath: r.item_path, oldValue: r.old_value,
        newValue: r.new_value, reason: r.reason, requestId: r.request_id,
        ...(r.form_version != null ? { formVersion: Number(r.form_version) } : {}), prevHash: r.prev_hash,
      });
      if (want !== r.hash) return { ok: false, checked, firstBroken: { id, problem: 'its content does not match its hash (the row was altered)' } };
      prev = r.hash;
      lastId = id;
      checked++;
    }
  }
  const [head] = await sequelize.query<{ hash: string }>('SELECT hash FROM audit_chain_head WHERE id = 1', { type: QueryTypes.SELECT });
  if (head && head.hash !== prev) return { ok: false, checked, firstBroken: { id: lastId, problem: 'the chain head does not point at the last row (rows were removed)' } };
  return { ok: true, checked };
}
