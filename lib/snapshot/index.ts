import 'server-only';
import { createHash, randomBytes } from 'node:crypto';
import { createWriteStream, type WriteStream } from 'node:fs';
import { mkdtemp, rm, stat } from 'node:fs/promises';
import { once } from 'node:events';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { Op, QueryTypes, Transaction } from 'sequelize';
import {
  Allocation, AllocationSlot, CrfRecord, FormDefinition, Membership, Participant, Query, QueryMessage, RandomisationSetup, Signature, Site, Snapshot, Study, StudyForm, UnblindingEvent, User, Visit, sequelize,
} from '@/models';
import { AppError } from '@/lib/errors';
import { isLockedForAnalysis } from '@/lib/lock';
import { appendAudit } from '@/lib/audit';
import { putObjectFile } from '@/lib/storage';
import { verifyCommitment, scheduleCommitment } from '@/lib/randomise';
import { flattenRecord, repeatCounts } from './items';
import type { Role } from '@/lib/roles';

/** Version of the snapshot layout (files and their fields); exports read snapshots of this version. */
export const SNAPSHOT_FORMAT = 'excursion-snapshot/1';

/** The files of a snapshot, in the order the manifest lists them (records.<form>.jsonl are inserted after visits). */
export const SNAPSHOT_FILES = [
  'study.jsonl', 'participants.jsonl', 'visits.jsonl', 'forms.jsonl', 'allocations.jsonl', 'allocation_schedule.jsonl', 'randomisation.jsonl',
  'unblinding_events.jsonl', 'queries.jsonl', 'verifications.jsonl', 'signatures.jsonl', 'audit_trail.jsonl', 'users.jsonl',
] as const;

/** Audit rows read per database round trip (keyset paging on the primary key). */
const AUDIT_PAGE = 5000;
const PAGE = 1000;

type Actor = { userId: number; role: Role; requestId?: string };

/** One entry of manifest.json. */
export type ManifestEntry = { name: string; rows: number; bytes: number; sha256: string };
/** manifest.json: what the snapshot holds and the hash that identifies it. */
export type Manifest = { format: string; study: string; snapshotCreatedAt: string; files: ManifestEntry[]; snapshotHash: string };

/** The activation commitment checked against the stored allocation schedule. */
export type CommitmentResult = {
  status: 'verified' | 'failed' | 'not_activated';
  method?: string;
  algorithmVersion?: string;
  commitment?: string;
  recomputed?: string;
  scheduleSlots?: number;
  /** The commitment in the audit trail's activation row equals the stored one. */
  auditTrailMatches?: boolean;
  checkedAt: string;
};

/** SHA-256 over the manifest entries: one line `name TAB rows TAB bytes TAB sha256` per file, in manifest order. */
export function manifestHash(files: ManifestEntry[]): string {
  const h = createHash('sha256');
  for (const f of files) h.update(`${f.name}\t${f.rows}\t${f.bytes}\t${f.sha256}\n`);
  return h.digest('hex');
}

/** A JSON Lines file written to a temporary directory with back-pressure, hashed as it is written. */
class JsonlFile {
  readonly file: string;
  private out: WriteStream;
  private hash = createHash('sha256');
  rows = 0;
  bytes = 0;
  constructor(dir: string, readonly name: string) {
    this.file = path.join(dir, name);
    this.out = createWriteStream(this.file);
  }
  async write(row: unknown) {
    const line = `${JSON.stringify(row)}\n`;
    this.hash.update(line);
    this.rows += 1;
    this.bytes += Buffer.byteLength(line);
    if (!this.out.write(line)) await once(this.out, 'drain');
  }
  async close(): Promise<ManifestEntry> {
    this.out.end();
    await once(this.out, 'finish');
    return { name: this.name, rows: this.rows, bytes: this.bytes, sha256: this.hash.digest('hex') };
  }
}

const iso = (d: Date | string | null | undefined) => (d == null ? null : d instanceof Date ? d.toISOString() : String(d));
/** MariaDB DATETIME(6) text → ISO 8601 UTC with microseconds. */
const dbTimeIso = (s: string) => `${s.replace(' ', 'T')}Z`;

/** Checks the activation commitment against the allocation schedule as stored now. */
export async function checkCommitment(studyId: number, t?: Transaction): Promise<CommitmentResult> {
  const checkedAt = new Date().toISOString();
  const setup = await RandomisationSetup.findOne({ where: { studyId }, transaction: t });
  if (!setup) return { status: 'not_activated', checkedAt };
  // The pre-generated schedule (block > 0); minimisation slots are created at randomisation and not committed.
  const slots = await AllocationSlot.findAll({ where: { studyId, blockSize: { [Op.gt]: 0 } }, order: [['id', 'ASC']], transaction: t, raw: true });
  const schedule = slots.map((s) => ({ stratum: s.stratum, slot: s.slot, arm: s.arm, block: s.block, blockSize: s.blockSize }));
  const recomputed = scheduleCommitment({ algorithmVersion: setup.algorithmVersion, seed: setup.seed, schedule });
  const ok = verifyCommitment({ algorithmVersion: setup.algorithmVersion, seed: setup.seed, schedule, commitment: setup.commitment });
  const [act] = await sequelize.query<{ new_value: string | null }>(
    "SELECT new_value FROM audit_events WHERE study_id = ? AND entity_type = 'randomisation' AND action = 'activate' ORDER BY id ASC LIMIT 1",
    { replacements: [studyId], type: QueryTypes.SELECT, transaction: t },
  );
  let auditCommitment: unknown = null;
  try {
    auditCommitment = act?.new_value ? (JSON.parse(act.new_value) as { commitment?: string }).commitment : null;
  } catch {
    auditCommitment = null;
  }
  const auditTrailMatches = auditCommitment === setup.commitment;
  const method = ((await Study.findByPk(studyId, { transaction: t }))?.config?.randomisation as { method?: string } | undefined)?.method ?? 'blocks';
  return {
    status: ok && auditTrailMatches ? 'verified' : 'failed',
    method, algorithmVersion: setup.algorithmVersion, commitment: setup.commitment, recomputed, scheduleSlots: schedule.length, auditTrailMatches, checkedAt,
  };
}

/**
 * Writes an immutable snapshot of a study to object storage: JSON Lines files (study and sites, form definitions of
 * every version used, participants, CRF records per form, visits, allocations and the schedule, randomisation setup
 * with the commitment check, unblinding events, queries, verifications, signatures, the audit trail read in pages,
 * the users referenced) and manifest.json with row counts and SHA-256 of each file. Everything is read in one
 * consistent (repeatable-read) transaction and streamed through temporary files, so memory stays bounded. The
 * `snapshots` row and its audit row are written only after every file is stored: an interrupted run lists nothing.
 */
export async function createSnapshot(a: { studyId: number; actor: Actor }) {
  const study = await Study.findByPk(a.studyId);
  if (!study) throw new AppError('not_found', 'The study was not found.');
  // The snapshot reveals the allocation schedule, so it exists only for a study under its hard lock.
  if (!(await isLockedForAnalysis(study.id))) throw new AppError('conflict', `Study ${study.code} is not hard-locked. A snapshot is taken when the data manager hard-locks the study.`);
  const dir = await mkdtemp(path.join(tmpdir(), 'excursion-snapshot-'));
  const createdAt = new Date();
  const prefix = `snapshots/${study.id}/${createdAt.toISOString().replace(/[-:.]/g, '')}-${randomBytes(6).toString('hex')}`;
  try {
    const { entries, commitment } = await sequelize.transaction({ isolationLevel: Transaction.ISOLATION_LEVELS.REPEATABLE_READ }, async (t) => {
      const files = new Map<string, JsonlFile>();
      const open = (name: string) => {
        const f = new JsonlFile(dir, name);
        files.set(name, f);
        return f;
      };
      const entries: ManifestEntry[] = [];
      const userIds = new Set<number>();
      const sites = await Site.findAll({ where: { studyId: study.id }, order: [['code', 'ASC']], transaction: t });
      const siteCode = new Map(sites.map((s) => [s.id, s.code]));

      const fStudy = open('study.jsonl');
      await fStudy.write({ kind: 'study', id: study.id, code: study.code, title: study.title, status: study.status, config: study.config, createdAt: iso(study.createdAt) });
      for (const s of sites) await fStudy.write({ kind: 'site', id: s.id, code: s.code, name: s.name, timeZone: s.timeZone, recruitmentTarget: s.recruitmentTarget, active: s.active });
      await fStudy.write({ kind: 'metadata', format: SNAPSHOT_FORMAT, snapshotCreatedAt: createdAt.toISOString(), createdBy: a.actor.userId, createdByRole: a.actor.role });
      userIds.add(a.actor.userId);

      const fPart = open('participants.jsonl');
      for (let last = 0; ;) {
        const page = await Participant.findAll({ where: { studyId: study.id, id: { [Op.gt]: last } }, order: [['id', 'ASC']], limit: PAGE, transaction: t });
        if (!page.length) break;
        for (const p of page) {
          await fPart.write({
            id: p.id, siteId: p.siteId, site: siteCode.get(p.siteId) ?? null, screeningNumber: p.screeningNumber, subjectCode: p.subjectCode, status: p.status, screeningDate: p.screeningDate ?? null,
            age: p.age ?? null, sex: p.sex ?? null, screeningOutcome: p.screeningOutcome, screeningReasons: p.screeningReasons ?? null, unblindedAt: iso(p.unblindedAt), createdBy: p.createdBy, createdAt: iso(p.createdAt),
          });
        }
        last = page[page.length - 1].id;
      }

      const fVisits = open('visits.jsonl');
      for (let last = 0; ;) {
        const page = await Visit.findAll({ where: { studyId: study.id, id: { [Op.gt]: last } }, order: [['id', 'ASC']], limit: PAGE, transaction: t });
        if (!page.length) break;
        for (const v of page) {
          await fVisits.write({ id: v.id, participantId: v.participantId, siteId: v.siteId, visitKey: v.visitKey, label: v.label, day0: v.day0, target: v.target, earliest: v.earliest, latest: v.latest, blinded: v.blinded, required: v.required, forms: v.forms, completedOn: v.completedOn });
        }
        last = page[page.length - 1].id;
      }

      // CRF records, one file per form; the versions used and the repeating-row counts are collected on the way.
      const pins = await StudyForm.findAll({ where: { studyId: study.id }, order: [['formKey', 'ASC']], transaction: t });
      const used = await sequelize.query<{ form_key: string; form_version: number }>(
        'SELECT DISTINCT form_key, form_version FROM crf_records WHERE study_id = ? ORDER BY form_key, form_version',
        { replacements: [study.id], type: QueryTypes.SELECT, transaction: t },
      );
      const versions = new Map<string, Set<number>>();
      for (const p of pins) versions.set(p.formKey, new Set([p.version]));
      for (const u of used) (versions.get(u.form_key) ?? versions.set(u.form_key, new Set()).get(u.form_key)!).add(Number(u.form_version));
      const defs = new Map<string, FormDefinition>();
      for (const [key, vs] of versions) {
        for (const v of vs) {
          const d = await FormDefinition.findOne({ where: { formKey: key, version: v }, transaction: t });
          if (d) defs.set(`${key}@${v}`, d);
        }
      }
      const repeats = new Map<string, Record<string, number>>();
      const recordFiles: ManifestEntry[] = [];
      for (const key of [...versions.keys()].sort()) {
        const f = new JsonlFile(dir, `records.${key}.jsonl`);
        const rep: Record<string, number> = {};
        // Ordered by participant (then id), so exports can merge the form files participant by participant.
        for (let lastP = 0, lastId = 0; ;) {
          const page = await CrfRecord.findAll({
            where: { studyId: study.id, formKey: key, [Op.or]: [{ participantId: { [Op.gt]: lastP } }, { participantId: lastP, id: { [Op.gt]: lastId } }] },
            order: [['participantId', 'ASC'], ['id', 'ASC']], limit: PAGE, transaction: t,
          });
          if (!page.length) break;
          for (const r of page) {
            const def = defs.get(`${key}@${r.formVersion}`);
            if (def) repeatCounts(flattenRecord(def.schemaJson, { ...r.data, ...r.derived }), rep);
            if (r.createdBy) userIds.add(r.createdBy);
            if (r.updatedBy) userIds.add(r.updatedBy);
            await f.write({
              id: r.id, participantId: r.participantId, siteId: r.siteId, formKey: r.formKey, formVersion: r.formVersion, visitKey: r.visitKey, instance: r.instance, status: r.status,
              data: r.data, derived: r.derived, review: r.review, lockVersion: r.lockVersion, createdBy: r.createdBy, updatedBy: r.updatedBy, submittedAt: iso(r.submittedAt), voidReason: r.voidReason,
              createdAt: iso(r.createdAt), updatedAt: iso(r.updatedAt),
            });
          }
          lastP = page[page.length - 1].participantId;
          lastId = page[page.length - 1].id;
        }
        repeats.set(key, rep);
        recordFiles.push(await f.close());
      }

      const fForms = open('forms.jsonl');
      for (const key of [...versions.keys()].sort()) {
        const pinned = pins.find((p) => p.formKey === key)?.version ?? null;
        for (const v of [...versions.get(key)!].sort((x, y) => x - y)) {
          const d = defs.get(`${key}@${v}`);
          if (!d) continue;
          await fForms.write({ formKey: key, version: v, title: d.title, access: d.access, pinned: pinned === v, contentHash: d.contentHash, schema: d.schemaJson, ui: d.uiJson, rules: d.rulesJson, repeats: repeats.get(key) ?? {} });
        }
      }

      const fAlloc = open('allocations.jsonl');
      const allocs = await Allocation.findAll({ where: { studyId: study.id }, order: [['id', 'ASC']], transaction: t });
      const slotOf = new Map((await AllocationSlot.findAll({ where: { id: { [Op.in]: allocs.map((x) => x.slotId).concat(0) } }, transaction: t })).map((s) => [s.id, s]));
      for (const x of allocs) {
        userIds.add(x.allocatedBy);
        await fAlloc.write({ id: x.id, participantId: x.participantId, siteId: x.siteId, stratum: x.stratum, arm: x.arm, slotId: x.slotId, slot: slotOf.get(x.slotId)?.slot ?? null, allocatedBy: x.allocatedBy, allocatedAt: iso(x.allocatedAt) });
      }
      const fSched = open('allocation_schedule.jsonl');
      for (let last = 0; ;) {
        const page = await AllocationSlot.findAll({ where: { studyId: study.id, id: { [Op.gt]: last } }, order: [['id', 'ASC']], limit: PAGE * 5, transaction: t });
        if (!page.length) break;
        for (const s of page) await fSched.write({ id: s.id, stratum: s.stratum, slot: s.slot, arm: s.arm, block: s.block, blockSize: s.blockSize, participantId: s.participantId, usedAt: iso(s.usedAt) });
        last = page[page.length - 1].id;
      }
      const commitment = await checkCommitment(study.id, t);
      const fRand = open('randomisation.jsonl');
      const setup = await RandomisationSetup.findOne({ where: { studyId: study.id }, transaction: t });
      if (setup) {
        userIds.add(setup.activatedBy);
        // Revealed with the snapshot (after lock): the seed lets anyone recompute the commitment.
        await fRand.write({ algorithmVersion: setup.algorithmVersion, seed: setup.seed, commitment: setup.commitment, perStratum: setup.perStratum, activatedBy: setup.activatedBy, activatedAt: iso(setup.activatedAt), check: commitment });
      }

      const fUnb = open('unblinding_events.jsonl');
      for (const u of await UnblindingEvent.findAll({ where: { studyId: study.id }, order: [['id', 'ASC']], transaction: t })) {
        userIds.add(u.userId);
        await fUnb.write({ id: u.id, participantId: u.participantId, siteId: u.siteId, userId: u.userId, role: u.role, reason: u.reason, at: iso(u.at) });
      }

      const fQ = open('queries.jsonl');
      for (let last = 0; ;) {
        const page = await Query.findAll({ where: { studyId: study.id, id: { [Op.gt]: last } }, order: [['id', 'ASC']], limit: PAGE, transaction: t });
        if (!page.length) break;
        const msgs = await QueryMessage.findAll({ where: { queryId: { [Op.in]: page.map((q) => q.id) } }, order: [['id', 'ASC']], transaction: t });
        for (const q of page) {
          if (q.openedBy) userIds.add(q.openedBy);
          const m = msgs.filter((x) => x.queryId === q.id);
          for (const x of m) if (x.userId) userIds.add(x.userId);
          await fQ.write({
            id: q.id, participantId: q.participantId, siteId: q.siteId, recordId: q.recordId, formKey: q.formKey, itemPath: q.itemPath, state: q.state, source: q.source, ruleId: q.ruleId, message: q.message,
            openedBy: q.openedBy, closedAt: iso(q.closedAt), createdAt: iso(q.createdAt), updatedAt: iso(q.updatedAt),
            messages: m.map((x) => ({ userId: x.userId, role: x.role, kind: x.kind, text: x.text, at: iso(x.createdAt) })),
          });
        }
        last = page[page.length - 1].id;
      }

      const fVer = open('verifications.jsonl');
      const vers = await sequelize.query<Record<string, unknown>>(
        'SELECT v.id, v.record_id, v.item_path, v.verified_by, v.verified_at, v.cleared_at, v.cleared_reason, r.participant_id FROM verifications v JOIN crf_records r ON r.id = v.record_id WHERE r.study_id = ? ORDER BY v.id',
        { replacements: [study.id], type: QueryTypes.SELECT, transaction: t },
      );
      for (const v of vers) {
        userIds.add(Number(v.verified_by));
        await fVer.write({ id: Number(v.id), recordId: Number(v.record_id), participantId: Number(v.participant_id), itemPath: v.item_path, verifiedBy: Number(v.verified_by), verifiedAt: iso(v.verified_at as Date), clearedAt: iso(v.cleared_at as Date | null), clearedReason: v.cleared_reason ?? null });
      }

      const fSig = open('signatures.jsonl');
      for (const s of await Signature.findAll({ where: { studyId: study.id }, order: [['id', 'ASC']], transaction: t })) {
        userIds.add(s.signerUserId);
        await fSig.write({ id: s.id, participantId: s.participantId, siteId: s.siteId, signerUserId: s.signerUserId, signerName: s.signerName, meaning: s.meaning, signedAt: iso(s.signedAt), contentHash: s.contentHash, status: s.status, invalidatedAt: iso(s.invalidatedAt), invalidatedReason: s.invalidatedReason });
      }

      // The audit trail can hold hundreds of thousands of rows: keyset pages, written as they arrive.
      const fAudit = open('audit_trail.jsonl');
      for (let last = 0; ;) {
        const page = await sequelize.query<Record<string, unknown>>(
          `SELECT id, DATE_FORMAT(at, '%Y-%m-%d %H:%i:%s.%f') AS at, actor_user_id, actor_role, site_id, entity_type, entity_id, action, item_path, old_value, new_value, reason, request_id, form_version, prev_hash, hash
           FROM audit_events WHERE study_id = ? AND id > ? ORDER BY id LIMIT ${AUDIT_PAGE}`,
          { replacements: [study.id, last], type: QueryTypes.SELECT, transaction: t },
        );
        if (!page.length) break;
        for (const r of page) {
          if (r.actor_user_id != null) userIds.add(Number(r.actor_user_id));
          await fAudit.write({
            id: Number(r.id), at: dbTimeIso(String(r.at)), actorUserId: r.actor_user_id == null ? null : Number(r.actor_user_id), actorRole: r.actor_role, siteId: r.site_id == null ? null : Number(r.site_id),
            entityType: r.entity_type, entityId: r.entity_id, action: r.action, itemPath: r.item_path, oldValue: r.old_value, newValue: r.new_value, reason: r.reason, requestId: r.request_id,
            formVersion: r.form_version == null ? null : Number(r.form_version), prevHash: r.prev_hash, hash: r.hash,
          });
        }
        last = Number(page[page.length - 1].id);
      }

      const fUsers = open('users.jsonl');
      const members = await Membership.findAll({ where: { studyId: study.id }, transaction: t });
      for (const m of members) userIds.add(m.userId);
      const ids = [...userIds].sort((x, y) => x - y);
      for (let i = 0; i < ids.length; i += PAGE) {
        const us = await User.findAll({ where: { id: { [Op.in]: ids.slice(i, i + PAGE) } }, order: [['id', 'ASC']], transaction: t });
        for (const u of us) {
          const ms = members.filter((m) => m.userId === u.id);
          await fUsers.write({ id: u.id, name: u.name, email: u.email, roles: ms.map((m) => ({ role: m.role, site: m.siteId ? siteCode.get(m.siteId) ?? null : null, revokedAt: iso(m.revokedAt) })) });
        }
      }

      for (const name of SNAPSHOT_FILES) {
        entries.push(await files.get(name)!.close());
        if (name === 'visits.jsonl') entries.push(...recordFiles);
      }
      return { entries, commitment };
    });

    for (const e of entries) await putObjectFile(`${prefix}/${e.name}`, path.join(dir, e.name), (await stat(path.join(dir, e.name))).size, 'application/x-ndjson', e.sha256);
    const snapshotHash = manifestHash(entries);
    const manifest: Manifest = { format: SNAPSHOT_FORMAT, study: study.code, snapshotCreatedAt: createdAt.toISOString(), files: entries, snapshotHash };
    const manifestFile = path.join(dir, 'manifest.json');
    const body = `${JSON.stringify(manifest, null, 2)}\n`;
    const out = createWriteStream(manifestFile);
    out.end(body);
    await once(out, 'finish');
    await putObjectFile(`${prefix}/manifest.json`, manifestFile, Buffer.byteLength(body), 'application/json', createHash('sha256').update(body).digest('hex'));

    // Only now, with every file stored, does the snapshot exist.
    const counts = Object.fromEntries(entries.map((e) => [e.name, e.rows]));
    const row = await sequelize.transaction(async (t) => {
      const s = await Snapshot.create({ studyId: study.id, createdAt, createdBy: a.actor.userId, storagePrefix: prefix, manifestHash: snapshotHash, counts, commitmentResult: commitment }, { transaction: t });
      await appendAudit(t, [{ actorUserId: a.actor.userId, actorRole: a.actor.role, studyId: study.id, entityType: 'snapshot', entityId: s.id, action: 'create', newValue: { storagePrefix: prefix, snapshotHash, files: entries.length, commitment: commitment.status }, requestId: a.actor.requestId }]);
      return s;
    });
    return presentSnapshot(row, null);
  } finally {
    await rm(dir, { recursive: true, force: true });
  }
}

/** A snapshot as routes and pages show it. */
export type SnapshotView = { id: number; createdAt: string; createdBy: string | null; storagePrefix: string; snapshotHash: string; counts: Record<string, number>; commitment: CommitmentResult };

function presentSnapshot(s: Snapshot, createdBy: string | null): SnapshotView {
  const parse = <T,>(v: unknown): T => (typeof v === 'string' ? (JSON.parse(v) as T) : (v as T));
  return { id: s.id, createdAt: s.createdAt.toISOString(), createdBy, storagePrefix: s.storagePrefix, snapshotHash: s.manifestHash, counts: parse(s.counts), commitment: parse(s.commitmentResult) };
}

/** The snapshots of a study, newest first. */
export async function listSnapshots(studyId: number): Promise<SnapshotView[]> {
  const rows = await Snapshot.findAll({ where: { studyId }, order: [['id', 'DESC']] });
  const users = await User.findAll({ where: { id: { [Op.in]: rows.map((r) => r.createdBy).concat(0) } } });
  return rows.map((r) => presentSnapshot(r, users.find((u) => u.id === r.createdBy)?.name ?? null));
}

/** One snapshot of a study (404 when it belongs to another study). */
export async function getSnapshot(studyId: number, snapshotId: number): Promise<SnapshotView> {
  if (!Number.isSafeInteger(snapshotId) || snapshotId < 1) throw new AppError('not_found', 'The snapshot was not found.');
  const s = await Snapshot.findOne({ where: { id: snapshotId, studyId } });
  if (!s) throw new AppError('not_found', 'The snapshot was not found.');
  const u = await User.findByPk(s.createdBy);
  return presentSnapshot(s, u?.name ?? null);
}

/** Who may list snapshots and download exports: the statistician and the data manager. */
export const SNAPSHOT_READ_ROLES: Role[] = ['statistician', 'data_manager'];
/** Who may take a snapshot through the API (until the hard lock takes snapshots itself). */
export const SNAPSHOT_CREATE_ROLES: Role[] = ['data_manager'];
