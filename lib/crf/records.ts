import 'server-only';
import { Op, QueryTypes, UniqueConstraintError } from 'sequelize';
import { CrfRecord, Participant, sequelize } from '@/models';
import { AppError } from '@/lib/errors';
import { appendAudit, auditedTransaction, type AuditInput } from '@/lib/audit';
import type { Role } from '@/lib/roles';
import { getDefinition, pinnedVersion, type CompiledForm } from './definitions';
import { itemErrors } from './ajv';
import { evaluateRules, type Violation } from './rules';
import { diffItems } from './diff';
import { derive } from './derive';
import { isBlinded, readRoles, writeRoles, REASON_CODES, type ReasonCode } from './access';
import { afterRecordSaved } from './hooks';
import { notifySae } from '@/lib/monitoring/safety';
import { assertWritable } from '@/lib/lock';

/** Who is saving, as it goes into the audit trail. */
export type CrfActor = { userId: number; roles: Role[]; requestId?: string };

/** The reason a change to a submitted record needs: a code from the list plus free text. */
export type ChangeReason = { code: ReasonCode; text?: string };

export type SaveInput = {
  study: { id: number; config: Record<string, unknown> };
  siteId: number;
  participantId: number;
  formKey: string;
  visitKey?: string;
  instance?: number;
  data: Record<string, unknown>;
  intent: 'draft' | 'submit';
  /** The lockVersion the client edited; null when it believes the record does not exist yet. */
  baseVersion: number | null;
  reason?: ChangeReason;
  actor: CrfActor;
  /** The site's current date (YYYY-MM-DD), for "not in the future" checks. */
  today: string;
};

/** A record as the API presents it, with the definition version it was entered with. */
export type RecordView = {
  id: number;
  participantId: number;
  formKey: string;
  formVersion: number;
  visitKey: string;
  instance: number;
  status: string;
  data: Record<string, unknown>;
  derived: Record<string, unknown>;
  review: Violation[];
  lockVersion: number;
  submittedAt: string | null;
  updatedAt: string;
};

export const presentRecord = (r: CrfRecord): RecordView => ({
  id: r.id,
  participantId: r.participantId,
  formKey: r.formKey,
  formVersion: r.formVersion,
  visitKey: r.visitKey,
  instance: r.instance,
  status: r.status,
  data: r.data,
  derived: r.derived,
  review: r.review as Violation[],
  lockVersion: r.lockVersion,
  submittedAt: r.submittedAt?.toISOString() ?? null,
  updatedAt: r.updatedAt.toISOString(),
});

function actingRole(actor: CrfActor, allowed: Role[]): Role {
  const r = actor.roles.find((x) => allowed.includes(x));
  if (!r) throw new AppError('forbidden', 'Your role does not allow entering this form.');
  return r;
}

function reasonText(reason: ChangeReason | undefined): string | null {
  if (!reason) return null;
  const label = REASON_CODES[reason.code];
  return reason.text ? `${label}: ${reason.text}` : label;
}

/** Validates a document against a definition and its rules; returns item errors and the rule findings. */
export function checkDocument(def: CompiledForm, doc: Record<string, unknown>, intent: 'draft' | 'submit', today: string) {
  const validate = intent === 'submit' ? def.validateFull : def.validateDraft;
  const ok = validate(doc);
  const fields = ok ? {} : itemErrors(validate.errors);
  const violations = evaluateRules(def.rules.rules, doc, { today });
  return { fields, violations };
}

/**
 * Saves a CRF record in one transaction: server-side AJV validation against the record's own form version,
 * cross-field rules, optimistic concurrency, a reason for every change after submission, and one audit
 * row per changed item (derived items included, with the reason "derived"). Nothing is written on any failure.
 */
export async function saveRecord(input: SaveInput): Promise<RecordView> {
  const visitKey = input.visitKey ?? '';
  const instance = input.instance ?? 1;
  // The participant at this site and the version of the record already in this slot, in one plain query (every save
  // runs it; the record itself is read again, locked, inside the transaction).
  const [slot] = await sequelize.query<{ id: number; form_version: number | null }>(
    `SELECT p.id, r.form_version FROM participants p
       LEFT JOIN crf_records r ON r.participant_id = p.id AND r.form_key = ? AND r.visit_key = ? AND r.instance = ?
      WHERE p.id = ? AND p.study_id = ? AND p.site_id = ?`,
    { replacements: [input.formKey, visitKey, instance, input.participantId, input.study.id, input.siteId], type: QueryTypes.SELECT },
  );
  if (!slot) throw new AppError('not_found', 'The participant was not found at this site.');
  const participant = { id: Number(slot.id) };

  const def = await getDefinition(input.formKey, slot.form_version !== null ? Number(slot.form_version) : await pinnedVersion(input.study.id, input.formKey));
  const role = actingRole(input.actor, writeRoles(def.access));

  // Derived items are never accepted from the client: drop them, then compute them here.
  const entered: Record<string, unknown> = {};
  for (const [k, v] of Object.entries(input.data)) if (!def.derivedKeys.includes(k)) entered[k] = v;
  const operation = def.key === 'follow_up' ? (await CrfRecord.findOne({ where: { participantId: participant.id, formKey: 'operation', status: 'submitted' } }))?.data ?? null : null;
  let derived: Record<string, unknown> = {};
  let deriveError: Error | null = null;
  try {
    derived = derive(def, entered, { operation });
  } catch (e) {
    if ((e as { code?: string }).code !== 'invalid_input') throw e;
    deriveError = e as Error;
  }
  const doc = { ...entered, ...derived };

  const { fields, violations } = checkDocument(def, doc, input.intent, input.today);
  if (Object.keys(fields).length) {
    throw new AppError('validation_failed', 'Some items need attention before this can be saved.', { fields });
  }
  // Values the schema accepts but a score cannot use (e.g. a deficit larger than its flexion) are refused too.
  if (deriveError) throw new AppError('invalid_input', `The scores cannot be calculated: ${deriveError.message}`);
  const hard = violations.filter((v) => v.level === 'hard');
  if (input.intent === 'submit' && hard.length) {
    const f: Record<string, string> = {};
    for (const v of hard) for (const p of v.items.length ? v.items : ['/']) f[p] = v.message;
    throw new AppError('validation_failed', hard.map((v) => v.message).join(' '), { fields: f, details: { violations } });
  }

  try {
    const out = await auditedTransaction(sequelize, async (t) => {
      await assertWritable(input.study.id, input.siteId, 'entry', t);
      const current = await CrfRecord.findOne({ where: { participantId: participant.id, formKey: input.formKey, visitKey, instance }, transaction: t, lock: t.LOCK.UPDATE });
      if (current && current.lockVersion !== input.baseVersion) {
        throw new AppError('stale_version', 'Someone else saved this form after you opened it. Their values are shown; nothing of yours was saved.', { details: { current: presentRecord(current) } });
      }
      if (!current && input.baseVersion !== null) throw new AppError('stale_version', 'This form is no longer where you opened it. Reload it.');
      if (current?.status === 'voided') throw new AppError('conflict', 'This record was voided and cannot be changed.');
      const wasSubmitted = current?.status === 'submitted';
      const newStatus = input.intent === 'submit' || wasSubmitted ? 'submitted' : 'draft';
      const before = current ? { ...current.data, ...current.derived } : {};
      const changes = diffItems(before, doc);
      if (wasSubmitted && changes.some((c) => !def.derivedKeys.includes(c.path.split('/')[1] ?? '')) && !input.reason) {
        throw new AppError('validation_failed', 'This form was submitted: every change needs a reason.', { fields: { reason: 'Choose a reason for the change.' } });
      }
      if (current && changes.length === 0 && current.status === newStatus) return { view: presentRecord(current), sae: null };

      const now = new Date();
      let rec: CrfRecord;
      if (current) {
        await current.update(
          { data: entered, derived, review: violations, status: newStatus, lockVersion: current.lockVersion + 1, updatedBy: input.actor.userId, submittedAt: current.submittedAt ?? (newStatus === 'submitted' ? now : null) },
          { transaction: t },
        );
        rec = current;
      } else {
        rec = await CrfRecord.create(
          {
            studyId: input.study.id, siteId: input.siteId, participantId: participant.id, formKey: def.key, formVersion: def.version, visitKey, instance, status: newStatus,
            data: entered, derived, review: violations, lockVersion: 1, createdBy: input.actor.userId, updatedBy: input.actor.userId, submittedAt: newStatus === 'submitted' ? now : null, voidReason: null,
          },
          { transaction: t },
        );
      }
      const base = { actorUserId: input.actor.userId, actorRole: role, studyId: input.study.id, siteId: input.siteId, entityType: 'crf_record', entityId: rec.id, requestId: input.actor.requestId, formVersion: def.version };
      const rows: AuditInput[] = [];
      if (!current) rows.push({ ...base, action: 'create', newValue: { participantId: participant.id, formKey: def.key, visitKey, instance } });
      const reason = reasonText(input.reason);
      for (const c of changes) {
        const isDerived = def.derivedKeys.includes(c.path.split('/')[1] ?? '');
        rows.push({ ...base, action: 'item', itemPath: c.path, oldValue: c.old, newValue: c.new, reason: isDerived ? 'derived' : reason });
      }
      if ((current?.status ?? null) !== newStatus) rows.push({ ...base, action: 'status', itemPath: null, oldValue: current?.status ?? null, newValue: newStatus, reason });
      await appendAudit(t, rows);
      const after = await afterRecordSaved({
        record: rec, t, actor: { userId: input.actor.userId, role, requestId: input.actor.requestId },
        changedPaths: current ? changes.map((c) => c.path) : [], created: !current, reasonCode: input.reason?.code, reasonText: reason, findings: violations,
      });
      return { view: presentRecord(rec), sae: after.sae };
    });
    // E-mail only after the commit: a rolled-back save sends nothing.
    if (out.sae) await notifySae(out.sae, input.study);
    return out.view;
  } catch (e) {
    if (e instanceof UniqueConstraintError) throw new AppError('stale_version', 'Someone else started this form at the same moment. Reload it.');
    throw e;
  }
}

/** Voids a record entered in error (kept, with the reason, in the record and the audit trail). */
export async function voidRecord(a: { studyId: number; siteId: number; recordId: number; reason: string; actor: CrfActor; baseVersion: number }) {
  return auditedTransaction(sequelize, async (t) => {
    await assertWritable(a.studyId, a.siteId, 'entry', t);
    const rec = await CrfRecord.findOne({ where: { id: a.recordId, studyId: a.studyId, siteId: a.siteId }, transaction: t, lock: t.LOCK.UPDATE });
    if (!rec) throw new AppError('not_found', 'The record was not found at this site.');
    const def = await getDefinition(rec.formKey, rec.formVersion);
    const role = actingRole(a.actor, [...writeRoles(def.access), 'data_manager']);
    if (rec.lockVersion !== a.baseVersion) throw new AppError('stale_version', 'The record changed after you opened it.', { details: { current: presentRecord(rec) } });
    if (rec.status === 'voided') throw new AppError('conflict', 'The record is already voided.');
    const old = rec.status;
    await rec.update({ status: 'voided', voidReason: a.reason, lockVersion: rec.lockVersion + 1, updatedBy: a.actor.userId }, { transaction: t });
    await appendAudit(t, [{ actorUserId: a.actor.userId, actorRole: role, studyId: a.studyId, siteId: a.siteId, entityType: 'crf_record', entityId: rec.id, action: 'status', oldValue: old, newValue: 'voided', reason: a.reason, requestId: a.actor.requestId, formVersion: rec.formVersion }]);
    return presentRecord(rec);
  });
}

/** Loads one record slot for reading, with its definition; refuses unblinded-only forms to blinded readers. */
export async function readRecord(a: { study: { id: number; config: Record<string, unknown> }; siteId: number; participantId: number; formKey: string; visitKey?: string; instance?: number; roles: Role[] }) {
  const participant = await Participant.findOne({ where: { id: a.participantId, studyId: a.study.id, siteId: a.siteId } });
  if (!participant) throw new AppError('not_found', 'The participant was not found at this site.');
  const rec = await CrfRecord.findOne({ where: { participantId: participant.id, formKey: a.formKey, visitKey: a.visitKey ?? '', instance: a.instance ?? 1 } });
  const def = await getDefinition(a.formKey, rec?.formVersion ?? (await pinnedVersion(a.study.id, a.formKey)));
  if (!a.roles.some((r) => readRoles(def.access, a.study.config).includes(r))) throw new AppError('forbidden', 'Your role does not allow reading this form.');
  if (rec && rec.formKey === 'protocol_deviation' && rec.data.reveals_allocation === 'Y' && isBlinded(a.roles, a.study.config)) {
    throw new AppError('forbidden', 'This record is kept from blinded roles.');
  }
  return {
    record: rec ? presentRecord(rec) : null,
    definition: { key: def.key, version: def.version, title: def.title, access: def.access, schema: def.schema, ui: def.ui },
    canWrite: a.roles.some((r) => writeRoles(def.access).includes(r)),
  };
}

export type AuditRow = { id: number; at: string; actor: string | null; role: string | null; action: string; itemPath: string | null; oldValue: unknown; newValue: unknown; reason: string | null; formKey: string; formVersion: number | null; recordId: number };

const parse = (v: string | null) => (v === null ? null : JSON.parse(v));

/** Audit rows of a participant's records, newest first, with filters and server-side paging. */
export async function participantAudit(a: { participantId: number; formKeys: string[]; hideRevealing?: boolean; formKey?: string; userId?: number; itemPath?: string; recordId?: number; from?: string; to?: string; page: number; pageSize: number }) {
  const where = ["a.entity_type = 'crf_record'", 'r.participant_id = ?'];
  const rep: unknown[] = [a.participantId];
  if (a.formKeys.length === 0) return { total: 0, rows: [] as AuditRow[] };
  where.push(`r.form_key IN (${a.formKeys.map(() => '?').join(',')})`);
  if (a.hideRevealing) where.push("NOT (r.form_key = 'protocol_deviation' AND JSON_VALUE(r.data, '$.reveals_allocation') = 'Y')");
  rep.push(...a.formKeys);
  if (a.formKey) (where.push('r.form_key = ?'), rep.push(a.formKey));
  if (a.userId) (where.push('a.actor_user_id = ?'), rep.push(a.userId));
  if (a.recordId) (where.push('r.id = ?'), rep.push(a.recordId));
  if (a.itemPath) (where.push('a.item_path = ?'), rep.push(a.itemPath));
  if (a.from) (where.push('a.at >= ?'), rep.push(`${a.from} 00:00:00`));
  if (a.to) (where.push('a.at < DATE_ADD(?, INTERVAL 1 DAY)'), rep.push(a.to));
  const sqlWhere = where.join(' AND ');
  const [{ n }] = await sequelize.query<{ n: number }>(`SELECT COUNT(*) AS n FROM audit_events a JOIN crf_records r ON r.id = a.entity_id WHERE ${sqlWhere}`, { replacements: rep, type: QueryTypes.SELECT });
  const rows = await sequelize.query<{ id: number; at: string; name: string | null; actor_role: string | null; action: string; item_path: string | null; old_value: string | null; new_value: string | null; reason: string | null; form_key: string; form_version: number | null; record_id: number }>(
    `SELECT a.id, DATE_FORMAT(a.at, '%Y-%m-%dT%H:%i:%s.%fZ') AS at, u.name, a.actor_role, a.action, a.item_path, a.old_value, a.new_value, a.reason, r.form_key, a.form_version, r.id AS record_id
       FROM audit_events a JOIN crf_records r ON r.id = a.entity_id LEFT JOIN users u ON u.id = a.actor_user_id
      WHERE ${sqlWhere} ORDER BY a.id DESC LIMIT ? OFFSET ?`,
    { replacements: [...rep, a.pageSize, (a.page - 1) * a.pageSize], type: QueryTypes.SELECT },
  );
  return {
    total: Number(n),
    rows: rows.map<AuditRow>((r) => ({ id: Number(r.id), at: r.at, actor: r.name, role: r.actor_role, action: r.action, itemPath: r.item_path, oldValue: parse(r.old_value), newValue: parse(r.new_value), reason: r.reason, formKey: r.form_key, formVersion: r.form_version === null ? null : Number(r.form_version), recordId: Number(r.record_id) })),
  };
}

/** Records of a participant (for the casebook), without unblinded-only forms for blinded readers. */
export async function participantRecords(participantId: number, visibleForms: string[]) {
  const recs = await CrfRecord.findAll({ where: { participantId, formKey: { [Op.in]: visibleForms } }, order: [['formKey', 'ASC'], ['visitKey', 'ASC'], ['instance', 'ASC']] });
  return recs.map(presentRecord);
}
