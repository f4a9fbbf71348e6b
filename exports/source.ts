// What every export reads: a stored snapshot (never the live tables), turned into named tables of rows for the
// spreadsheet and the CSV bundle, with the full or the de-identified profile applied. Small files (study, forms,
// participants, users, allocations, visits, queries) are held in memory; records and the audit trail stream.
import { createHmac, randomBytes } from 'node:crypto';
import { readAll, readManifest, readRows } from '@/lib/snapshot/read';
import type { Manifest, SnapshotView } from '@/lib/snapshot';
import { deidentifyValue, flattenRecord, isDateFormat, schemaColumns, schemaItems, studyDay, type Column, type ItemDef } from '@/lib/snapshot/items';
import { REASON_CODES } from '@/lib/crf/access';

export type Profile = 'full' | 'deidentified';
export const PROFILES: readonly Profile[] = ['full', 'deidentified'];

/** What the de-identified profile does, as the summary sheet and the README state it. */
export const DEIDENTIFICATION_RULES = [
  'Study IDs are replaced by random codes made for this export; screening numbers are left out.',
  'Free-text items (text without a code list or format) and free-text reasons and messages are left out.',
  'Dates are shown as study days: whole days from the participant’s randomisation date (or consent date), which is day 0.',
  'Ages above 89 are shown as 90+.',
  'Staff names, e-mail addresses and user names are replaced by role and a pseudonym (U1, U2 …); request ids are left out.',
];

export type FormRow = { formKey: string; version: number; title: string; access: string; pinned: boolean; contentHash: string; schema: Record<string, unknown>; repeats: Record<string, number> };
type ParticipantRow = { id: number; siteId: number; site: string | null; screeningNumber: string; subjectCode: string | null; status: string; screeningDate: string | null; age: number | null; sex: string | null; screeningOutcome: string; screeningReasons: string[] | null; unblindedAt: string | null };
type UserRow = { id: number; name: string; email: string; roles: { role: string; site: string | null }[] };
export type RecordRow = { id: number; participantId: number; siteId: number; formKey: string; formVersion: number; visitKey: string; instance: number; status: string; data: Record<string, unknown>; derived: Record<string, unknown>; submittedAt: string | null; createdAt: string | null; updatedAt: string | null; createdBy: number | null; updatedBy: number | null; voidReason: string | null };
export type AuditRow = { id: number; at: string; actorUserId: number | null; actorRole: string | null; siteId: number | null; entityType: string; entityId: string; action: string; itemPath: string | null; oldValue: string | null; newValue: string | null; reason: string | null; requestId: string | null; formVersion: number | null; hash: string };
type AllocationRow = { id: number; participantId: number; siteId: number; stratum: string; arm: string; slot: number | null; allocatedBy: number; allocatedAt: string };

/** A table of the export: keys, labels and a stream of rows (cells in column order). */
export type Table = { name: string; title: string; columns: { key: string; label: string }[]; rows: () => AsyncIterable<unknown[]> };

/** Everything an export needs besides the streamed files. */
export type ExportContext = Awaited<ReturnType<typeof loadContext>>;

const cell = (v: unknown): unknown => (v === undefined || v === null ? null : typeof v === 'object' ? JSON.stringify(v) : v);

/** Reads the small snapshot files and prepares the profile's pseudonyms and reference dates. */
export async function loadContext(snapshot: SnapshotView, prefix: string, profile: Profile) {
  const manifest: Manifest = await readManifest(prefix);
  const studyFile = await readAll<Record<string, unknown>>(prefix, 'study.jsonl');
  const study = studyFile.find((r) => r.kind === 'study') as { id: number; code: string; title: string; config: Record<string, unknown> };
  const sites = studyFile.filter((r) => r.kind === 'site') as { id: number; code: string; name: string }[];
  const forms = await readAll<FormRow>(prefix, 'forms.jsonl');
  const participants = new Map((await readAll<ParticipantRow>(prefix, 'participants.jsonl')).map((p) => [p.id, p]));
  const users = new Map((await readAll<UserRow>(prefix, 'users.jsonl')).map((u) => [u.id, u]));
  const allocations = await readAll<AllocationRow>(prefix, 'allocations.jsonl');
  const visits = new Map((await readAll<{ id: number; participantId: number }>(prefix, 'visits.jsonl')).map((v) => [v.id, v.participantId]));
  const queries = new Map((await readAll<{ id: number; participantId: number }>(prefix, 'queries.jsonl')).map((q) => [q.id, q.participantId]));
  const signatures = new Map((await readAll<{ id: number; participantId: number }>(prefix, 'signatures.jsonl')).map((q) => [q.id, q.participantId]));
  const has = (name: string) => manifest.files.some((f) => f.name === name);

  // Which participant, form and version each record belongs to (the audit trail names records by id).
  const records = new Map<number, { participantId: number; formKey: string; formVersion: number; visitKey: string; instance: number }>();
  const consentDate = new Map<number, string>();
  for (const key of new Set(forms.map((f) => f.formKey))) {
    if (!has(`records.${key}.jsonl`)) continue;
    for await (const r of readRows<RecordRow>(prefix, `records.${key}.jsonl`)) {
      records.set(r.id, { participantId: r.participantId, formKey: r.formKey, formVersion: r.formVersion, visitKey: r.visitKey, instance: r.instance });
      if (key === 'consent' && r.status !== 'voided' && typeof r.data.DSSTDAT === 'string') consentDate.set(r.participantId, r.data.DSSTDAT);
    }
  }
  const refDate = new Map<number, string | null>();
  for (const p of participants.values()) {
    const al = allocations.find((x) => x.participantId === p.id);
    refDate.set(p.id, al ? al.allocatedAt.slice(0, 10) : consentDate.get(p.id) ?? null);
  }

  const deid = profile === 'deidentified';
  const key = randomBytes(32);
  const pseudo = new Map<number, string>();
  const subjectKey = (pid: number | null | undefined): string | null => {
    if (pid == null) return null;
    const p = participants.get(pid);
    if (!deid) return p ? p.subjectCode ?? `screening ${p.screeningNumber}` : `participant ${pid}`;
    let s = pseudo.get(pid);
    if (!s) {
      s = `S${createHmac('sha256', key).update(String(pid)).digest('hex').slice(0, 10).toUpperCase()}`;
      pseudo.set(pid, s);
    }
    return s;
  };
  const userIndex = new Map([...users.keys()].sort((x, y) => x - y).map((id, i) => [id, i + 1]));
  const userLabel = (uid: number | null | undefined): string | null => {
    if (uid == null) return null;
    if (deid) return `U${userIndex.get(uid) ?? `x${uid}`}`;
    const u = users.get(uid);
    return u ? `${u.name} <${u.email}>` : `user ${uid}`;
  };
  const siteCode = (id: number | null | undefined) => (id == null ? null : sites.find((s) => s.id === id)?.code ?? String(id));
  const formDefs = new Map(forms.map((f) => [`${f.formKey}@${f.version}`, { ...f, items: new Map(schemaItems(f.schema).map((i) => [i.key, i])) }]));
  const day = (pid: number | null | undefined, date: string | null | undefined) => {
    if (pid == null || !date) return null;
    const ref = refDate.get(pid);
    return ref ? studyDay(date, ref) : null;
  };
  /** The participant an audit row is about, when it is about one. */
  const auditParticipant = (r: AuditRow): number | null => {
    const id = Number(r.entityId);
    switch (r.entityType) {
      case 'participant':
      case 'allocation':
        return participants.has(id) ? id : null;
      case 'crf_record':
      case 'verification':
        return records.get(id)?.participantId ?? null;
      case 'visit':
        return visits.get(id) ?? null;
      case 'query':
        return queries.get(id) ?? null;
      case 'signature':
        return signatures.get(id) ?? null;
      case 'upload': {
        try {
          const v = JSON.parse(r.newValue ?? 'null') as { participantId?: number } | null;
          return v?.participantId ?? null;
        } catch {
          return null;
        }
      }
      default:
        return null;
    }
  };
  return { manifest, snapshot, prefix, profile, deid, study, sites, forms, formDefs, participants, users, allocations, records, refDate, subjectKey, userLabel, siteCode, day, auditParticipant, has };
}

/** The item an audit row's JSON Pointer names, for the form version it was entered with. */
export function pointerItem(schema: Record<string, unknown>, pointer: string): string | null {
  const segs = pointer.split('/').slice(1).map((s) => s.replace(/~1/g, '/').replace(/~0/g, '~'));
  const parts: string[] = [];
  let n: Record<string, unknown> | undefined = schema;
  for (const s of segs) {
    if (!n) return null;
    const props = n.properties as Record<string, Record<string, unknown>> | undefined;
    if (props && s in props) {
      parts.push(s);
      n = props[s];
    } else if (Array.isArray(n.items) && /^\d+$/.test(s)) {
      parts.push(String(Number(s) + 1));
      n = (n.items as Record<string, unknown>[])[Number(s)];
    } else if (n.items && typeof n.items === 'object' && /^\d+$/.test(s)) {
      parts.push('*');
      n = n.items as Record<string, unknown>;
    } else return null;
  }
  return parts.join('.');
}

const KNOWN_REASONS = new Set<string>([...Object.values(REASON_CODES), 'derived']);

/** The columns of a form's table: fixed keys first, then every item column over all versions used. */
export function formColumns(ctx: ExportContext, formKey: string): { fixed: { key: string; label: string }[]; items: (Column & { date: boolean })[] } {
  const fixed = [
    { key: 'subject', label: ctx.deid ? 'Participant (pseudonym)' : 'Study ID' },
    { key: 'site', label: 'Site' },
    { key: 'visit', label: 'Visit' },
    { key: 'instance', label: 'Instance' },
    { key: 'record_id', label: 'Record' },
    { key: 'form_version', label: 'Form version' },
    { key: 'record_status', label: 'Record status' },
  ];
  const seen = new Map<string, Column & { date: boolean }>();
  for (const f of ctx.forms.filter((x) => x.formKey === formKey)) {
    const def = ctx.formDefs.get(`${f.formKey}@${f.version}`)!;
    for (const c of schemaColumns(f.schema, f.repeats)) {
      if (seen.has(c.key)) continue;
      const it = def.items.get(c.item);
      if (ctx.deid && it?.freeText) continue;
      const date = !!it && isDateFormat(it.format);
      seen.set(c.key, { ...c, label: ctx.deid && date ? `${c.label} (study day)` : c.label, date });
    }
  }
  return { fixed, items: [...seen.values()] };
}

function ageCell(ctx: ExportContext, age: number | null) {
  if (age == null) return null;
  return ctx.deid && age > 89 ? '90+' : age;
}

/** The form table: one row per record (participant × visit × instance), one column per item. */
export function formTable(ctx: ExportContext, formKey: string): Table {
  const cols = formColumns(ctx, formKey);
  const title = ctx.forms.find((f) => f.formKey === formKey)?.title ?? formKey;
  return {
    name: formKey,
    title,
    columns: [...cols.fixed, ...cols.items.map((c) => ({ key: c.key, label: c.label }))],
    rows: async function* () {
      if (!ctx.has(`records.${formKey}.jsonl`)) return;
      for await (const r of readRows<RecordRow>(ctx.prefix, `records.${formKey}.jsonl`)) {
        const def = ctx.formDefs.get(`${r.formKey}@${r.formVersion}`);
        const values = new Map<string, unknown>();
        if (def) {
          for (const v of flattenRecord(def.schema, { ...r.data, ...r.derived })) {
            const it = def.items.get(v.item);
            values.set(v.column, ctx.deid ? deidentifyValue(it, v.value, ctx.refDate.get(r.participantId) ?? null) : v.value);
          }
        }
        yield [
          ctx.subjectKey(r.participantId), ctx.siteCode(r.siteId), r.visitKey || null, r.instance, r.id, r.formVersion, r.status,
          ...cols.items.map((c) => cell(values.get(c.key))),
        ];
      }
    },
  };
}

/** Participants with their screening log entries. */
export function participantsTable(ctx: ExportContext): Table {
  const columns = ctx.deid
    ? [
        { key: 'subject', label: 'Participant (pseudonym)' }, { key: 'site', label: 'Site' }, { key: 'status', label: 'Status' }, { key: 'screening_outcome', label: 'Screening outcome' },
        { key: 'screening_day', label: 'Screening (study day)' }, { key: 'age', label: 'Age (years)' }, { key: 'sex', label: 'Sex' }, { key: 'unblinded', label: 'Emergency unblinded' },
      ]
    : [
        { key: 'subject', label: 'Study ID' }, { key: 'screening_number', label: 'Screening number' }, { key: 'site', label: 'Site' }, { key: 'status', label: 'Status' }, { key: 'screening_outcome', label: 'Screening outcome' },
        { key: 'screening_reasons', label: 'Screening reasons' }, { key: 'screening_date', label: 'Screening date' }, { key: 'age', label: 'Age (years)' }, { key: 'sex', label: 'Sex' }, { key: 'unblinded_at', label: 'Emergency unblinded at' },
      ];
  return {
    name: 'participants',
    title: 'Participants',
    columns,
    rows: async function* () {
      for (const p of ctx.participants.values()) {
        yield ctx.deid
          ? [ctx.subjectKey(p.id), p.site, p.status, p.screeningOutcome, ctx.day(p.id, p.screeningDate), ageCell(ctx, p.age), p.sex, p.unblindedAt ? 'yes' : 'no']
          : [ctx.subjectKey(p.id), p.screeningNumber, p.site, p.status, p.screeningOutcome, cell(p.screeningReasons?.join('; ') ?? null), p.screeningDate, p.age, p.sex, p.unblindedAt];
      }
    },
  };
}

/** Allowed values of an item as one text (`Y = Yes; N = No`). */
export const allowedValues = (it: ItemDef) => (it.codes ? it.codes.map((c) => `${String(c.value)} = ${c.label}`).join('; ') : null);

/** The data dictionary: every item of every form version in the snapshot. */
export function dictionaryTable(ctx: ExportContext): Table {
  return {
    name: 'dictionary',
    title: 'Data dictionary',
    columns: [
      { key: 'form', label: 'Form' }, { key: 'form_title', label: 'Form title' }, { key: 'version', label: 'Version' }, { key: 'item', label: 'Item key' }, { key: 'label', label: 'Label' },
      { key: 'type', label: 'Type' }, { key: 'format', label: 'Format' }, { key: 'units', label: 'Units' }, { key: 'allowed_values', label: 'Allowed values' },
      { key: 'minimum', label: 'Minimum' }, { key: 'maximum', label: 'Maximum' }, { key: 'origin', label: 'Entered or derived' }, { key: 'in_export', label: 'In this export' },
    ],
    rows: async function* () {
      for (const f of ctx.forms) {
        for (const it of schemaItems(f.schema)) {
          const inExport = !ctx.deid ? 'as entered' : it.freeText ? 'left out (free text)' : isDateFormat(it.format) ? 'as study day' : 'as entered';
          yield [f.formKey, f.title, f.version, it.key, it.label, it.type, it.format, it.units, allowedValues(it), it.minimum, it.maximum, it.derived ? 'derived' : 'entered', inExport];
        }
      }
    },
  };
}

/** Allocations (revealed with the snapshot). */
export function allocationTable(ctx: ExportContext): Table {
  const arms = (ctx.study.config.arms ?? []) as { code: string; label: string }[];
  return {
    name: 'allocation',
    title: 'Allocation',
    columns: [
      { key: 'subject', label: ctx.deid ? 'Participant (pseudonym)' : 'Study ID' }, { key: 'site', label: 'Site' }, { key: 'stratum', label: 'Stratum' }, { key: 'slot', label: 'Schedule slot' },
      { key: 'arm', label: 'Arm' }, { key: 'arm_label', label: 'Arm label' }, { key: ctx.deid ? 'allocated_day' : 'allocated_at', label: ctx.deid ? 'Allocated (study day)' : 'Allocated at (UTC)' }, { key: 'allocated_by', label: 'Allocated by' },
    ],
    rows: async function* () {
      for (const a of ctx.allocations) {
        yield [ctx.subjectKey(a.participantId), ctx.siteCode(a.siteId), a.stratum, a.slot, a.arm, arms.find((x) => x.code === a.arm)?.label ?? a.arm, ctx.deid ? ctx.day(a.participantId, a.allocatedAt) : a.allocatedAt, ctx.userLabel(a.allocatedBy)];
      }
    },
  };
}

/** The allocation schedule as stored, with the slot's use. */
export function scheduleTable(ctx: ExportContext): Table {
  return {
    name: 'allocation_schedule',
    title: 'Allocation schedule',
    columns: [
      { key: 'stratum', label: 'Stratum' }, { key: 'slot', label: 'Slot' }, { key: 'block', label: 'Block' }, { key: 'block_size', label: 'Block size' }, { key: 'arm', label: 'Arm' },
      { key: 'used_by', label: ctx.deid ? 'Used by (pseudonym)' : 'Used by' }, { key: ctx.deid ? 'used_day' : 'used_at', label: ctx.deid ? 'Used (study day)' : 'Used at (UTC)' },
    ],
    rows: async function* () {
      for await (const s of readRows<{ stratum: string; slot: number; block: number; blockSize: number; arm: string; participantId: number | null; usedAt: string | null }>(ctx.prefix, 'allocation_schedule.jsonl')) {
        yield [s.stratum, s.slot, s.block, s.blockSize, s.arm, ctx.subjectKey(s.participantId), ctx.deid ? ctx.day(s.participantId, s.usedAt) : s.usedAt];
      }
    },
  };
}

/** The emergency unblinding register. */
export function unblindingTable(ctx: ExportContext): Table {
  return {
    name: 'unblinding',
    title: 'Unblinding register',
    columns: [
      { key: 'subject', label: ctx.deid ? 'Participant (pseudonym)' : 'Study ID' }, { key: 'site', label: 'Site' }, { key: 'user', label: 'By' }, { key: 'role', label: 'Role' },
      ...(ctx.deid ? [{ key: 'day', label: 'Study day' }] : [{ key: 'reason', label: 'Reason' }, { key: 'at', label: 'At (UTC)' }]),
    ],
    rows: async function* () {
      for await (const u of readRows<{ participantId: number; siteId: number; userId: number; role: string; reason: string; at: string }>(ctx.prefix, 'unblinding_events.jsonl')) {
        yield [ctx.subjectKey(u.participantId), ctx.siteCode(u.siteId), ctx.userLabel(u.userId), u.role, ...(ctx.deid ? [ctx.day(u.participantId, u.at)] : [u.reason, u.at])];
      }
    },
  };
}

/** One audit row as the de-identified profile shows its values: item values scrubbed by the item's definition. */
export function deidAuditValues(ctx: ExportContext, r: AuditRow, pid: number | null): { old: unknown; new: unknown; reason: string | null } {
  const reason = r.reason && KNOWN_REASONS.has(r.reason) ? r.reason : r.reason ? '[removed]' : null;
  const parse = (s: string | null) => {
    if (s == null) return undefined;
    try {
      return JSON.parse(s) as unknown;
    } catch {
      return undefined;
    }
  };
  if (r.entityType === 'crf_record' && r.action === 'status') return { old: parse(r.oldValue) ?? null, new: parse(r.newValue) ?? null, reason };
  if (r.entityType === 'crf_record' && r.action === 'item' && r.itemPath) {
    const rec = ctx.records.get(Number(r.entityId));
    const def = rec ? ctx.formDefs.get(`${rec.formKey}@${r.formVersion ?? rec.formVersion}`) : undefined;
    const key = def ? pointerItem(def.schema, r.itemPath) : null;
    const it = key ? def!.items.get(key) : undefined;
    const ref = pid != null ? ctx.refDate.get(pid) ?? null : null;
    const scrub = (v: unknown) => {
      if (v === undefined) return null;
      if (!it || (v !== null && typeof v === 'object')) return '[removed]';
      const out = deidentifyValue(it, v, ref);
      return out === undefined ? '[removed]' : out;
    };
    return { old: scrub(parse(r.oldValue)), new: scrub(parse(r.newValue)), reason };
  }
  return { old: r.oldValue == null ? null : '[removed]', new: r.newValue == null ? null : '[removed]', reason };
}

/** The audit trail of the study, oldest first. */
export function auditTable(ctx: ExportContext): Table {
  const columns = ctx.deid
    ? [
        { key: 'id', label: 'Audit id' }, { key: 'day', label: 'Study day' }, { key: 'user', label: 'User (pseudonym)' }, { key: 'role', label: 'Role' }, { key: 'site', label: 'Site' },
        { key: 'entity_type', label: 'Entity' }, { key: 'entity_id', label: 'Entity id' }, { key: 'subject', label: 'Participant (pseudonym)' }, { key: 'action', label: 'Action' }, { key: 'item', label: 'Item' },
        { key: 'form_version', label: 'Form version' }, { key: 'old_value', label: 'Old value' }, { key: 'new_value', label: 'New value' }, { key: 'reason', label: 'Reason' }, { key: 'hash', label: 'Hash' },
      ]
    : [
        { key: 'id', label: 'Audit id' }, { key: 'at', label: 'At (UTC)' }, { key: 'user', label: 'User' }, { key: 'role', label: 'Role' }, { key: 'site', label: 'Site' },
        { key: 'entity_type', label: 'Entity' }, { key: 'entity_id', label: 'Entity id' }, { key: 'subject', label: 'Study ID' }, { key: 'action', label: 'Action' }, { key: 'item', label: 'Item' },
        { key: 'form_version', label: 'Form version' }, { key: 'old_value', label: 'Old value' }, { key: 'new_value', label: 'New value' }, { key: 'reason', label: 'Reason' }, { key: 'request_id', label: 'Request' }, { key: 'hash', label: 'Hash' },
      ];
  return {
    name: 'audit_trail',
    title: 'Audit trail',
    columns,
    rows: async function* () {
      for await (const r of readRows<AuditRow>(ctx.prefix, 'audit_trail.jsonl')) {
        const pid = ctx.auditParticipant(r);
        if (ctx.deid) {
          const v = deidAuditValues(ctx, r, pid);
          const entityId = r.entityType === 'participant' || r.entityType === 'allocation' ? ctx.subjectKey(pid) : r.entityId;
          yield [r.id, ctx.day(pid, r.at), ctx.userLabel(r.actorUserId), r.actorRole, ctx.siteCode(r.siteId), r.entityType, entityId, ctx.subjectKey(pid), r.action, r.itemPath, r.formVersion, cell(v.old), cell(v.new), v.reason, r.hash];
        } else {
          yield [r.id, r.at, ctx.userLabel(r.actorUserId), r.actorRole, ctx.siteCode(r.siteId), r.entityType, r.entityId, ctx.subjectKey(pid), r.action, r.itemPath, r.formVersion, r.oldValue, r.newValue, r.reason, r.requestId, r.hash];
        }
      }
    },
  };
}

/** The summary table: what the snapshot is and what this export holds. */
export function summaryRows(ctx: ExportContext): [string, unknown][] {
  const c = ctx.snapshot.commitment;
  return [
    ['Study', ctx.study.code],
    ['Title', ctx.study.title],
    ['Snapshot', ctx.snapshot.id],
    ['Locked (snapshot taken, UTC)', ctx.snapshot.createdAt],
    ['Snapshot hash (SHA-256 over the manifest)', ctx.manifest.snapshotHash],
    ['Snapshot format', ctx.manifest.format],
    ['De-identification profile', ctx.deid ? 'de-identified' : 'full (identifiable staff, study IDs, dates and free text)'],
    ...(ctx.deid ? DEIDENTIFICATION_RULES.map((r, i) => [`Rule ${i + 1}`, r] as [string, unknown]) : []),
    ['Randomisation commitment', c.status === 'verified' ? 'verified: the stored schedule matches the commitment made at activation' : c.status === 'failed' ? 'FAILED: the stored schedule does not match the commitment made at activation' : 'randomisation was not activated'],
    ...(c.commitment ? [['Commitment (SHA-256)', c.commitment] as [string, unknown], ['Recomputed from the stored schedule', c.recomputed ?? null] as [string, unknown]] : []),
    ...ctx.manifest.files.map((f) => [`Rows in ${f.name}`, f.rows] as [string, unknown]),
  ];
}

/** The tables every tabular export holds, in order (the summary is handled by each writer). */
export function dataTables(ctx: ExportContext): Table[] {
  const formKeys = [...new Set(ctx.forms.map((f) => f.formKey))];
  return [participantsTable(ctx), ...formKeys.map((k) => formTable(ctx, k)), dictionaryTable(ctx), allocationTable(ctx), scheduleTable(ctx), unblindingTable(ctx), auditTable(ctx)];
}
