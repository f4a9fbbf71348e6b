// Snapshots and the exports made from them, on a study built here through the domain functions: the manifest
// re-hashed from storage, the spreadsheet read back cell by cell against the database, the data dictionary against
// the form schemas, the ODM element tree, the CSV bundle, the de-identified profile scanned for identifiers and free
// text, the randomisation commitment (verified, then failing after a slot is tampered with), access and the access log.
import { createHash, randomBytes } from 'node:crypto';
import { describe, it, expect, beforeAll } from 'vitest';
import ExcelJS from 'exceljs';
import { XMLParser } from 'fast-xml-parser';
import yauzl from 'yauzl';
import { AccessLog, Allocation, CrfRecord, FormDefinition, Participant, Site, Study, StudyForm, type User } from '@/models';
import { DEMO_STUDY } from '@/lib/studies/demo';
import { pinForm } from '@/lib/crf/definitions';
import { saveRecord } from '@/lib/crf/records';
import { emergencyUnblind, randomiseParticipant } from '@/lib/allocation';
import { createSnapshot, checkCommitment } from '@/lib/snapshot';
import { setLock } from '@/lib/lock';
import { readManifest } from '@/lib/snapshot/read';
import { getObject } from '@/lib/storage';
import { makeUser, TEST_PASSWORD, uniq } from '../support/factories';
import { Client } from '../support/http';
import { privDb, rows } from '../support/db';
import { ensureActivated, example, readyParticipant } from '../support/ready';

const FORMS = ['eligibility', 'consent', 'baseline', 'operation', 'follow_up', 'adverse_event', 'protocol_deviation', 'end_of_participation', 'therapy_session'];
// Identifiers seeded into free-text items, reasons and the unblinding reason; none may reach a de-identified export.
const PEOPLE = [
  { initials: 'JQD', name: 'Jane Quill Doe', dob: '1984-03-12', email: 'jane.doe@mail.example' },
  { initials: 'KWR', name: 'Kofi Wren Rask', dob: '1979-07-29', email: 'k.rask@inbox.example' },
  { initials: 'MZT', name: 'Mira Zell Tovar', dob: '1991-01-05', email: 'mira.tovar@post.example' },
];
// Site codes of their own, so this file's study IDs (prefix-site-number) are told apart from other files'.
const siteCode = () => `X${randomBytes(3).toString('hex').toUpperCase()}`;
const PERSON_DATES = ['2026-10-02', '2026-10-04', '2026-10-05', '2026-11-20', '2026-11-21', '2026-11-28'];

let study: Study;
let aaa: Site;
let bbb: Site;
let stat: { user: User; email: string };
let dm: { user: User; email: string };
let others: Record<string, { user: User; email: string }> = {};
let snapshotId: number;
const freeTexts: string[] = [];
const staff: string[] = [];

async function client(email: string) {
  const c = new Client();
  const r = await c.signIn(email, TEST_PASSWORD);
  if (!r.ok) throw new Error(`sign-in failed for ${email}`);
  return c;
}

async function download(c: Client, id: number, format: string, profile: string) {
  const res = await c.raw(`/api/studies/${study.code}/snapshots/${id}/export?format=${format}&profile=${profile}`);
  expect(res.status).toBe(200);
  return { buf: Buffer.from(await res.arrayBuffer()), headers: res.headers };
}

beforeAll(async () => {
  study = await Study.create({ code: uniq('SNAP').toUpperCase(), title: 'Snapshot and export check', config: DEMO_STUDY.config, status: 'recruiting' });
  aaa = await Site.create({ studyId: study.id, code: siteCode(), name: 'Alder Clinic', timeZone: 'UTC', recruitmentTarget: 10 });
  bbb = await Site.create({ studyId: study.id, code: siteCode(), name: 'Birch Clinic', timeZone: 'UTC', recruitmentTarget: 6 });
  for (const f of FORMS) await pinForm(study.id, f, 1, { userId: null, role: 'system' });
  await ensureActivated(study);
  const coord = await makeUser([{ role: 'coordinator', site: null, studyId: study.id }]);
  const assessor = await makeUser([{ role: 'assessor', site: aaa.code, studyId: study.id }]);
  const inv = await makeUser([{ role: 'investigator', site: null, studyId: study.id }]);
  stat = await makeUser([{ role: 'statistician', site: null, studyId: study.id }]);
  dm = await makeUser([{ role: 'data_manager', site: null, studyId: study.id }]);
  others = {
    monitor: await makeUser([{ role: 'monitor', site: null, studyId: study.id }]),
    coordinator: coord,
    assessor,
    investigator: inv,
  };
  for (const u of [coord, assessor, inv, stat, dm]) staff.push(u.email, u.user.name);
  const actor = { userId: coord.user.id, roles: ['coordinator' as const] };
  for (const [i, person] of PEOPLE.entries()) {
    const screenedBy = `${person.initials} (${person.name}), born ${person.dob}`;
    freeTexts.push(screenedBy);
    const p = await readyParticipant(study, aaa, { coordinatorId: coord.user.id, eligibility: { ...example('eligibility'), screened_by: screenedBy }, fingers: i === 2 ? 2 : 1 });
    await randomiseParticipant({ study, site: aaa, participantId: p.id, actor: { userId: coord.user.id, role: 'coordinator' } });
    const aeTerm = `Adhesions; patient ${person.initials} reachable at ${person.email}`;
    freeTexts.push(aeTerm);
    await saveRecord({ study, siteId: aaa.id, participantId: p.id, formKey: 'adverse_event', data: { ...example('adverse_event'), AETERM: aeTerm, AESTDAT: '2026-11-21', aware_datetime: '2026-11-21T09:00:00Z' }, intent: 'submit', baseVersion: null, actor, today: '2026-12-02' });
    if (i === 0) {
      const fu = { ...example('follow_up'), VISDAT: '2026-11-28' };
      const saved = await saveRecord({ study, siteId: aaa.id, participantId: p.id, formKey: 'follow_up', visitKey: 'week6', data: fu, intent: 'submit', baseVersion: null, actor: { userId: assessor.user.id, roles: ['assessor'] }, today: '2026-12-02' });
      const reasonText = `confirmed with ${person.name} by phone`;
      freeTexts.push(reasonText);
      await saveRecord({ study, siteId: aaa.id, participantId: p.id, formKey: 'follow_up', visitKey: 'week6', data: { ...fu, pain: 4 }, intent: 'submit', baseVersion: saved.lockVersion, reason: { code: 'transcription_error', text: reasonText }, actor: { userId: assessor.user.id, roles: ['assessor'] }, today: '2026-12-02' });
      const unblindReason = `Suspected rupture, surgeon asked about ${person.initials}`;
      freeTexts.push(unblindReason);
      await emergencyUnblind({ study, site: aaa, participantId: p.id, reason: unblindReason, actor: { userId: inv.user.id, role: 'investigator' } });
    }
  }
  // A participant at the second site who is screened but not randomised.
  await readyParticipant(study, bbb, { coordinatorId: coord.user.id, skip: ['consent', 'baseline', 'operation'] });
  // No snapshot before the hard lock: it would reveal the allocation.
  const dmActor = { userId: dm.user.id, role: 'data_manager' as const };
  await expect(createSnapshot({ studyId: study.id, actor: dmActor })).rejects.toMatchObject({ code: 'conflict' });
  await setLock({ studyId: study.id, siteId: null, level: 'soft', actor: dmActor });
  await expect(createSnapshot({ studyId: study.id, actor: dmActor })).rejects.toMatchObject({ code: 'conflict' });
  // The hard lock takes the snapshot itself.
  const locked = await setLock({ studyId: study.id, siteId: null, level: 'hard', override: true, reason: 'export checks', actor: dmActor });
  if (!('snapshot' in locked) || !locked.snapshot || 'error' in locked.snapshot) throw new Error(`no snapshot at hard lock: ${JSON.stringify(locked)}`);
  expect(locked.snapshot.commitment).toBe('verified');
  snapshotId = locked.snapshot.id;
}, 180_000);

/** The value at a column key (dotted path, array positions counted from 1) of a record's entered and derived items. */
function resolve(doc: unknown, key: string): unknown {
  let cur: unknown = doc;
  for (const part of key.split('.')) {
    if (cur === null || cur === undefined) return undefined;
    if (Array.isArray(cur)) cur = cur[Number(part) - 1];
    else if (typeof cur === 'object') cur = (cur as Record<string, unknown>)[part];
    else return undefined;
  }
  return cur;
}

/** Every leaf of a JSON value with its dotted path (array positions from 1); empty containers are skipped. */
function leaves(v: unknown, path: string[] = [], out: [string, unknown][] = []): [string, unknown][] {
  if (Array.isArray(v)) v.forEach((x, i) => leaves(x, [...path, String(i + 1)], out));
  else if (v !== null && typeof v === 'object') for (const [k, x] of Object.entries(v)) leaves(x, [...path, k], out);
  else out.push([path.join('.'), v]);
  return out;
}

/** The item keys of a schema, walked here independently of the export code. */
function schemaLeafKeys(n: Record<string, any>, path: string[] = []): string[] {
  const t = Array.isArray(n.type) ? n.type.find((x: string) => x !== 'null') : n.type;
  if (t === 'object' && n.properties) return Object.entries(n.properties).flatMap(([k, c]) => schemaLeafKeys(c as Record<string, any>, [...path, k]));
  if (t === 'array' && Array.isArray(n.items)) return n.items.flatMap((c: Record<string, any>, i: number) => schemaLeafKeys(c, [...path, String(i + 1)]));
  if (t === 'array' && n.items) return schemaLeafKeys(n.items, [...path, '*']);
  return [path.join('.')];
}

function sheetRows(ws: ExcelJS.Worksheet): unknown[][] {
  const out: unknown[][] = [];
  const width = ws.getRow(1).cellCount;
  ws.eachRow({ includeEmpty: true }, (row) => {
    const cells: unknown[] = [];
    for (let c = 1; c <= width; c++) cells.push(row.getCell(c).value ?? null);
    out.push(cells);
  });
  return out;
}

async function workbook(buf: Buffer) {
  const wb = new ExcelJS.Workbook();
  await wb.xlsx.load(buf as unknown as ArrayBuffer);
  return wb;
}

function unzip(buf: Buffer): Promise<Map<string, string>> {
  return new Promise((resolveZip, reject) => {
    yauzl.fromBuffer(buf, { lazyEntries: true }, (err, zip) => {
      if (err || !zip) return reject(err);
      const files = new Map<string, string>();
      zip.on('entry', (entry: yauzl.Entry) => {
        zip.openReadStream(entry, (e, s) => {
          if (e || !s) return reject(e);
          const chunks: Buffer[] = [];
          s.on('data', (c: Buffer) => chunks.push(c));
          s.on('end', () => {
            files.set(entry.fileName, Buffer.concat(chunks).toString('utf8'));
            zip.readEntry();
          });
        });
      });
      zip.on('end', () => resolveZip(files));
      zip.on('error', reject);
      zip.readEntry();
    });
  });
}

/** RFC 4180 records (quoted fields may hold commas, quotes and line breaks). */
function parseCsv(text: string): string[][] {
  const out: string[][] = [];
  let row: string[] = [];
  let field = '';
  let quoted = false;
  for (let i = 0; i < text.length; i++) {
    const ch = text[i];
    if (quoted) {
      if (ch === '"' && text[i + 1] === '"') {
        field += '"';
        i++;
      } else if (ch === '"') quoted = false;
      else field += ch;
    } else if (ch === '"') quoted = true;
    else if (ch === ',') {
      row.push(field);
      field = '';
    } else if (ch === '\r' && text[i + 1] === '\n') {
      row.push(field);
      out.push(row);
      row = [];
      field = '';
      i++;
    } else field += ch;
  }
  if (field || row.length) {
    row.push(field);
    out.push(row);
  }
  return out;
}

describe('snapshot in object storage', () => {
  it('lists every file in the manifest with row counts and SHA-256 that match the stored bytes', async () => {
    const [row] = await rows<{ storage_prefix: string; manifest_hash: string }>(privDb(), 'SELECT storage_prefix, manifest_hash FROM snapshots WHERE id = ?', [snapshotId]);
    const m = await readManifest(row.storage_prefix);
    expect(m.format).toBe('excursion-snapshot/1');
    const names = m.files.map((f) => f.name);
    for (const n of ['study.jsonl', 'participants.jsonl', 'visits.jsonl', 'forms.jsonl', 'allocations.jsonl', 'allocation_schedule.jsonl', 'randomisation.jsonl', 'unblinding_events.jsonl', 'queries.jsonl', 'verifications.jsonl', 'signatures.jsonl', 'audit_trail.jsonl', 'users.jsonl', 'records.follow_up.jsonl', 'records.adverse_event.jsonl']) expect(names).toContain(n);
    const h = createHash('sha256');
    for (const f of m.files) {
      const bytes = await getObject(`${row.storage_prefix}/${f.name}`);
      expect(createHash('sha256').update(bytes).digest('hex'), f.name).toBe(f.sha256);
      expect(bytes.length, f.name).toBe(f.bytes);
      expect(bytes.toString('utf8').split('\n').filter(Boolean).length, f.name).toBe(f.rows);
      h.update(`${f.name}\t${f.rows}\t${f.bytes}\t${f.sha256}\n`);
    }
    expect(h.digest('hex')).toBe(m.snapshotHash);
    expect(row.manifest_hash).toBe(m.snapshotHash);
    const participants = await Participant.count({ where: { studyId: study.id } });
    expect(m.files.find((f) => f.name === 'participants.jsonl')!.rows).toBe(participants);
    expect(m.files.find((f) => f.name === 'records.follow_up.jsonl')!.rows).toBe(1);
    const [{ n }] = await rows<{ n: number }>(privDb(), "SELECT COUNT(*) AS n FROM audit_events WHERE study_id = ? AND entity_type <> 'snapshot'", [study.id]);
    expect(m.files.find((f) => f.name === 'audit_trail.jsonl')!.rows).toBe(Number(n));
  });

  it('is audited, and the snapshots table refuses UPDATE and DELETE from the application user', async () => {
    const [a] = await rows<{ n: number }>(privDb(), "SELECT COUNT(*) AS n FROM audit_events WHERE entity_type = 'snapshot' AND entity_id = ? AND action = 'create'", [String(snapshotId)]);
    expect(Number(a.n)).toBe(1);
    const { sequelize } = await import('@/models');
    await expect(sequelize.query('UPDATE snapshots SET manifest_hash = ? WHERE id = ?', { replacements: ['0'.repeat(64), snapshotId] })).rejects.toThrow(/denied/i);
    await expect(sequelize.query('DELETE FROM snapshots WHERE id = ?', { replacements: [snapshotId] })).rejects.toThrow(/denied/i);
  });
});

describe('spreadsheet export (full profile)', () => {
  let wb: ExcelJS.Workbook;
  beforeAll(async () => {
    const c = await client(stat.email);
    const d = await download(c, snapshotId, 'xlsx', 'full');
    expect(d.headers.get('content-disposition')).toMatch(new RegExp(`attachment; filename="${study.code}-snapshot-${snapshotId}-full\\.xlsx"`));
    wb = await workbook(d.buf);
  });

  it('starts with the snapshot sheet (study, lock time, hash, counts, profile)', async () => {
    expect(wb.worksheets[0].name).toBe('snapshot');
    const kv = new Map(sheetRows(wb.worksheets[0]).map((r) => [String(r[0]), r[1]]));
    const [row] = await rows<{ manifest_hash: string }>(privDb(), 'SELECT manifest_hash FROM snapshots WHERE id = ?', [snapshotId]);
    expect(kv.get('Study')).toBe(study.code);
    expect(kv.get('Snapshot hash (SHA-256 over the manifest)')).toBe(row.manifest_hash);
    expect(String(kv.get('De-identification profile'))).toMatch(/^full/);
    expect(kv.get('Rows in participants.jsonl')).toBe(4);
    expect(String(kv.get('Randomisation commitment'))).toMatch(/^verified/);
    expect(kv.has('Locked (snapshot taken, UTC)')).toBe(true);
  });

  it('has one sheet per form whose cells equal the database, cell by cell, with keys in row 1 and labels in row 2', async () => {
    for (const formKey of FORMS) {
      const ws = wb.getWorksheet(formKey)!;
      expect(ws, formKey).toBeTruthy();
      const [keys, labels, ...data] = sheetRows(ws);
      expect(keys.slice(0, 7)).toEqual(['subject', 'site', 'visit', 'instance', 'record_id', 'form_version', 'record_status']);
      expect(labels.every((l) => typeof l === 'string' && l.length > 0)).toBe(true);
      const db = await CrfRecord.findAll({ where: { studyId: study.id, formKey } });
      expect(data.length, formKey).toBe(db.length);
      const itemKeys = keys.slice(7) as string[];
      for (const r of data) {
        const rec = db.find((x) => x.id === r[4])!;
        expect(rec, `${formKey} record ${String(r[4])}`).toBeTruthy();
        const p = (await Participant.findByPk(rec.participantId))!;
        const site = rec.siteId === aaa.id ? aaa.code : bbb.code;
        expect(r.slice(0, 7)).toEqual([p.subjectCode ?? `screening ${p.screeningNumber}`, site, rec.visitKey || null, rec.instance, rec.id, rec.formVersion, rec.status]);
        const doc = { ...rec.data, ...rec.derived };
        itemKeys.forEach((k, i) => {
          const want = resolve(doc, k);
          const expected = want === undefined || want === null ? null : typeof want === 'object' ? JSON.stringify(want) : want;
          expect(r[7 + i], `${formKey} ${rec.id} ${k}`).toEqual(expected);
        });
        // Nothing in the record is missing from the sheet.
        for (const [path] of leaves(doc)) expect(itemKeys, `${formKey} ${path}`).toContain(path);
      }
    }
  });

  it('has participants, allocation and audit trail sheets equal to the database', async () => {
    const [, , ...ps] = sheetRows(wb.getWorksheet('participants')!);
    const dbP = await Participant.findAll({ where: { studyId: study.id } });
    expect(ps.length).toBe(dbP.length);
    for (const p of dbP) {
      const r = ps.find((x) => x[1] === p.screeningNumber)!;
      expect(r.slice(0, 4)).toEqual([p.subjectCode ?? `screening ${p.screeningNumber}`, p.screeningNumber, p.siteId === aaa.id ? aaa.code : bbb.code, p.status]);
      expect(r.slice(6, 9)).toEqual([p.screeningDate, p.age, p.sex]);
    }
    const [, , ...al] = sheetRows(wb.getWorksheet('allocation')!);
    const dbA = await Allocation.findAll({ where: { studyId: study.id } });
    expect(al.length).toBe(3);
    for (const a of dbA) {
      const p = (await Participant.findByPk(a.participantId))!;
      const r = al.find((x) => x[0] === p.subjectCode)!;
      expect([r[2], r[4], r[6]]).toEqual([a.stratum, a.arm, a.allocatedAt.toISOString()]);
    }
    const [keys, , ...audit] = sheetRows(wb.getWorksheet('audit_trail')!);
    const dbAudit = await rows<Record<string, any>>(privDb(), "SELECT id, DATE_FORMAT(at, '%Y-%m-%dT%H:%i:%s.%fZ') AS at, actor_role, entity_type, entity_id, action, item_path, old_value, new_value, reason, hash FROM audit_events WHERE study_id = ? AND entity_type <> 'snapshot' ORDER BY id", [study.id]);
    expect(audit.length).toBe(dbAudit.length);
    const col = (k: string) => keys.indexOf(k);
    audit.forEach((r, i) => {
      const d = dbAudit[i];
      expect([r[col('id')], r[col('at')], r[col('role')], r[col('entity_type')], r[col('entity_id')], r[col('action')], r[col('item')], r[col('old_value')], r[col('new_value')], r[col('reason')], r[col('hash')]]).toEqual([
        Number(d.id), d.at, d.actor_role, d.entity_type, d.entity_id, d.action, d.item_path, d.old_value, d.new_value, d.reason, d.hash,
      ]);
    });
    expect(audit.some((r) => r[col('action')] === 'emergency_unblind')).toBe(true);
  });

  it('has a data dictionary listing every item of every form version used', async () => {
    const [keys, , ...dict] = sheetRows(wb.getWorksheet('dictionary')!);
    expect(keys).toEqual(['form', 'form_title', 'version', 'item', 'label', 'type', 'format', 'units', 'allowed_values', 'minimum', 'maximum', 'origin', 'in_export']);
    const pins = await StudyForm.findAll({ where: { studyId: study.id } });
    let total = 0;
    for (const pin of pins) {
      const def = (await FormDefinition.findOne({ where: { formKey: pin.formKey, version: pin.version } }))!;
      const want = schemaLeafKeys(def.schemaJson);
      const got = dict.filter((r) => r[0] === pin.formKey && r[2] === pin.version).map((r) => r[3]);
      expect(got, pin.formKey).toEqual(want);
      total += want.length;
    }
    expect(dict.length).toBe(total);
    const sex = dict.find((r) => r[0] === 'baseline' && r[3] === 'SEX')!;
    expect(sex[8]).toMatch(/M = /);
    expect(dict.find((r) => r[0] === 'operation' && r[3] === 'n_injured_fingers')![11]).toBe('derived');
    expect(dict.find((r) => r[0] === 'follow_up' && r[3] === 'goniometry.*.mcp_flexion')![7]).toBe('degrees');
  });
});

describe('ODM 1.3.2 export', () => {
  it('parses back with the right counts of subjects, events, forms, items and audit records', async () => {
    const c = await client(stat.email);
    const { buf, headers } = await download(c, snapshotId, 'odm', 'full');
    expect(headers.get('content-type')).toMatch(/xml/);
    const arrays = new Set(['Study', 'SubjectData', 'StudyEventData', 'FormData', 'ItemGroupData', 'ItemData', 'AuditRecord', 'FormDef', 'ItemDef', 'ItemGroupDef', 'CodeList', 'CodeListItem', 'StudyEventDef', 'User', 'Location', 'ItemRef', 'FormRef', 'ItemGroupRef', 'StudyEventRef', 'MeasurementUnit', 'RangeCheck']);
    const doc = new XMLParser({ ignoreAttributes: false, attributeNamePrefix: '@', isArray: (name) => arrays.has(name) }).parse(buf.toString('utf8'));
    const odm = doc.ODM;
    expect(odm['@xmlns']).toBe('http://www.cdisc.org/ns/odm/v1.3');
    expect(odm['@FileType']).toBe('Snapshot');
    expect(odm['@ODMVersion']).toBe('1.3.2');
    expect(odm['@FileOID']).toMatch(/\S/);
    expect(Number.isNaN(Date.parse(odm['@CreationDateTime']))).toBe(false);
    const mdv = odm.Study[0].MetaDataVersion;
    expect(odm.Study[0].GlobalVariables.StudyName).toBe(study.code);
    expect(mdv.FormDef.length).toBe(FORMS.length);
    expect(mdv.ItemDef.every((d: any) => typeof d['@DataType'] === 'string')).toBe(true);
    expect(mdv.ItemDef.find((d: any) => d['@Name'] === 'AESTDAT')['@DataType']).toBe('date');
    expect(mdv.ItemDef.find((d: any) => d['@Name'] === 'pain')['@DataType']).toBe('integer');
    expect(mdv.CodeList.find((l: any) => l.CodeListItem.some((i: any) => i['@CodedValue'] === 'EPM'))).toBeUndefined();
    expect(mdv.CodeList.length).toBeGreaterThan(10);

    const cd = odm.ClinicalData;
    const db = await CrfRecord.findAll({ where: { studyId: study.id } });
    const subjects = cd.SubjectData;
    expect(subjects.length).toBe(await Participant.count({ where: { studyId: study.id } }));
    const events = subjects.flatMap((s: any) => s.StudyEventData ?? []);
    expect(events.length).toBe(new Set(db.map((r) => `${r.participantId}|${r.visitKey}`)).size);
    const forms = events.flatMap((e: any) => e.FormData ?? []);
    expect(forms.length).toBe(db.length);
    const items = forms.flatMap((f: any) => (f.ItemGroupData ?? []).flatMap((g: any) => g.ItemData ?? []));
    const expectedItems = db.reduce((n, r) => n + leaves({ ...r.data, ...r.derived }).filter(([, v]) => v !== null && v !== undefined).length, 0);
    expect(items.length).toBe(expectedItems);
    const itemOids = new Set(mdv.ItemDef.map((d: any) => d['@OID']));
    for (const i of items) expect(itemOids.has(i['@ItemOID'])).toBe(true);
    const [{ n }] = await rows<{ n: number }>(privDb(), "SELECT COUNT(*) AS n FROM audit_events WHERE study_id = ? AND entity_type <> 'snapshot'", [study.id]);
    const audits = cd.AuditRecords.AuditRecord;
    expect(audits.length).toBe(Number(n));
    const userOids = new Set(odm.AdminData.User.map((u: any) => u['@OID']));
    const locOids = new Set(odm.AdminData.Location.map((l: any) => l['@OID']));
    for (const a of audits) {
      expect(userOids.has(a.UserRef['@UserOID'])).toBe(true);
      expect(locOids.has(a.LocationRef['@LocationOID'])).toBe(true);
      expect(Number.isNaN(Date.parse(a.DateTimeStamp))).toBe(false);
    }
    expect(audits.some((a: any) => String(a.ReasonForChange ?? '').startsWith('Transcription error'))).toBe(true);
    // The repeating goniometry rows carry repeat keys 1 and 2.
    const fu = forms.find((f: any) => f['@FormOID'] === 'F.follow_up');
    const gon = fu.ItemGroupData.filter((g: any) => g['@ItemGroupOID'] === 'IG.follow_up.goniometry').map((g: any) => g['@ItemGroupRepeatKey']);
    expect(gon).toEqual(['1', '2']);
  });
});

describe('CSV bundle', () => {
  it('holds the same tables with the same row counts as the spreadsheet', async () => {
    const c = await client(stat.email);
    const csv = await unzip((await download(c, snapshotId, 'csv', 'full')).buf);
    const wb = await workbook((await download(c, snapshotId, 'xlsx', 'full')).buf);
    for (const ws of wb.worksheets) {
      const file = csv.get(`${ws.name}.csv`);
      expect(file, ws.name).toBeDefined();
      const recs = parseCsv(file!);
      const sheet = sheetRows(ws);
      const headerRows = ws.name === 'snapshot' ? 1 : 2;
      expect(recs.length - 1, ws.name).toBe(sheet.length - headerRows);
      expect(recs[0], ws.name).toEqual(sheet[0].map(String));
    }
    // A free-text value with a comma survives quoting.
    expect(parseCsv(csv.get('adverse_event.csv')!).some((r) => r.includes(`Adhesions; patient ${PEOPLE[0].initials} reachable at ${PEOPLE[0].email}`))).toBe(true);
  });
});

describe('de-identified profile', () => {
  const forbidden = () => [...PEOPLE.flatMap((p) => [p.initials, p.name, p.dob, p.email]), ...freeTexts, ...staff, ...PERSON_DATES];

  it('the spreadsheet holds no identifier, free text or date of a participant in any cell', async () => {
    const c = await client(stat.email);
    const wb = await workbook((await download(c, snapshotId, 'xlsx', 'deidentified')).buf);
    const ps = await Participant.findAll({ where: { studyId: study.id } });
    const codes = ps.flatMap((p) => [p.subjectCode, p.screeningNumber]).filter(Boolean) as string[];
    let cells = 0;
    const found: string[] = [];
    const bads = [...forbidden(), ...codes];
    for (const ws of wb.worksheets) {
      for (const r of sheetRows(ws)) {
        for (const v of r) {
          if (v === null) continue;
          cells++;
          const s = String(v);
          for (const bad of bads) if (s.includes(bad)) found.push(`${ws.name}: "${s}" contains "${bad}"`);
          if (/[\w.+-]+@[\w-]+\.[\w.]+/.test(s)) found.push(`${ws.name}: e-mail in "${s}"`);
          if (ws.name !== 'snapshot' && /\d{4}-\d{2}-\d{2}/.test(s)) found.push(`${ws.name}: date in "${s}"`);
        }
      }
    }
    expect(found).toEqual([]);
    expect(cells).toBeGreaterThan(500);
    // Dates became study days; free-text columns are gone; the dictionary says so.
    const [keys, , ...ae] = sheetRows(wb.getWorksheet('adverse_event')!);
    expect(keys).not.toContain('AETERM');
    // Study day = whole days from the randomisation date (day 0) to the event date, computed here from the database.
    const allocs = await Allocation.findAll({ where: { studyId: study.id } });
    const expectedDays = allocs.map((a) => Math.round((Date.parse('2026-11-21T00:00:00Z') - Date.parse(`${a.allocatedAt.toISOString().slice(0, 10)}T00:00:00Z`)) / 86_400_000));
    expect(ae.map((r) => r[keys.indexOf('AESTDAT')]).sort()).toEqual(expectedDays.sort());
    expect(ae.map((r) => r[keys.indexOf('aware_datetime')]).sort()).toEqual(expectedDays.sort());
    const [dk, , ...dict] = sheetRows(wb.getWorksheet('dictionary')!);
    expect(dict.find((r) => r[0] === 'adverse_event' && r[3] === 'AETERM')![dk.indexOf('in_export')]).toBe('left out (free text)');
    expect(dict.find((r) => r[0] === 'adverse_event' && r[3] === 'AESTDAT')![dk.indexOf('in_export')]).toBe('as study day');
  });

  it('the CSV bundle and the ODM file hold none of them either', async () => {
    const c = await client(stat.email);
    const csv = await unzip((await download(c, snapshotId, 'csv', 'deidentified')).buf);
    const odm = (await download(c, snapshotId, 'odm', 'deidentified')).buf.toString('utf8');
    const ps = await Participant.findAll({ where: { studyId: study.id } });
    const codes = ps.flatMap((p) => [p.subjectCode, p.screeningNumber]).filter(Boolean) as string[];
    for (const [name, text] of [...csv.entries(), ['odm', odm] as [string, string]]) {
      for (const bad of [...forbidden(), ...codes]) expect(text.includes(bad), `${name} contains "${bad}"`).toBe(false);
      expect(/[\w.+-]+@[\w-]+\.[a-z]{2,}/i.test(text), `${name} has an e-mail address`).toBe(false);
    }
    // Every text node and attribute of the ODM clinical data, parsed: no calendar date of a participant.
    const doc = new XMLParser({ ignoreAttributes: false, attributeNamePrefix: '@' }).parse(odm);
    const texts = leaves(doc.ODM.ClinicalData).map(([, v]) => String(v));
    expect(texts.length).toBeGreaterThan(100);
    expect(texts.filter((t) => /\d{4}-\d{2}-\d{2}/.test(t) && !/^\d{4}-01-01T00:00:00Z$/.test(t))).toEqual([]);
  });
});

describe('allocation reveal and the randomisation commitment', () => {
  it('verifies at snapshot time and shows the result with the snapshot', async () => {
    const c = await client(stat.email);
    const r = await c.get(`/api/studies/${study.code}/snapshots/${snapshotId}`);
    expect(r.status).toBe(200);
    expect(r.body.commitment.status).toBe('verified');
    expect(r.body.commitment.recomputed).toBe(r.body.commitment.commitment);
    expect(r.body.manifest.snapshotHash).toBe(r.body.snapshotHash);
    const list = await c.get(`/api/studies/${study.code}/snapshots`);
    expect(list.body.snapshots.map((s: { id: number }) => s.id)).toContain(snapshotId);
  });

  it('fails when one slot of the stored schedule was changed', async () => {
    const [slot] = await rows<{ id: number; arm: string }>(privDb(), 'SELECT id, arm FROM allocation_slots WHERE study_id = ? AND block_size > 0 ORDER BY id DESC LIMIT 1', [study.id]);
    const other = slot.arm === 'EPM' ? 'EAM' : 'EPM';
    await privDb().query('UPDATE allocation_slots SET arm = ? WHERE id = ?', { replacements: [other, slot.id] });
    try {
      expect((await checkCommitment(study.id)).status).toBe('failed');
      const c = await client(dm.email);
      const r = await c.post(`/api/studies/${study.code}/snapshots`, {});
      expect(r.status).toBe(200);
      expect(r.body.commitment.status).toBe('failed');
      expect(r.body.commitment.recomputed).not.toBe(r.body.commitment.commitment);
      const s = await client(stat.email);
      const xlsx = await workbook((await download(s, r.body.id, 'xlsx', 'full')).buf);
      const kv = new Map(sheetRows(xlsx.worksheets[0]).map((x) => [String(x[0]), x[1]]));
      expect(String(kv.get('Randomisation commitment'))).toMatch(/^FAILED/);
    } finally {
      await privDb().query('UPDATE allocation_slots SET arm = ? WHERE id = ?', { replacements: [slot.arm, slot.id] });
    }
    expect((await checkCommitment(study.id)).status).toBe('verified');
  });
});

describe('access', () => {
  it('401 without a session, 403 for other roles, only the data manager may take a snapshot', async () => {
    const anon = new Client();
    for (const p of ['snapshots', `snapshots/${snapshotId}`, `snapshots/${snapshotId}/export?format=xlsx`]) expect((await anon.get(`/api/studies/${study.code}/${p}`)).status).toBe(401);
    for (const [role, u] of Object.entries(others)) {
      const c = await client(u.email);
      for (const p of ['snapshots', `snapshots/${snapshotId}`, `snapshots/${snapshotId}/export?format=xlsx&profile=full`, `snapshots/${snapshotId}/export?format=odm&profile=deidentified`]) {
        expect((await c.get(`/api/studies/${study.code}/${p}`)).status, `${role} ${p}`).toBe(403);
      }
      expect((await c.post(`/api/studies/${study.code}/snapshots`, {})).status, role).toBe(403);
    }
    const s = await client(stat.email);
    expect((await s.post(`/api/studies/${study.code}/snapshots`, {})).status).toBe(403);
    expect((await s.get(`/api/studies/${study.code}/snapshots/${snapshotId}/export?format=pdf`)).status).toBe(400);
    expect((await s.get(`/api/studies/${study.code}/snapshots/${snapshotId}/export?format=xlsx&profile=identified`)).status).toBe(400);
    expect((await s.get(`/api/studies/${study.code}/snapshots/999999999/export?format=xlsx`)).status).toBe(404);
    expect((await s.post(`/api/studies/${study.code}/snapshots`, { x: 1 })).status).toBe(403);
    const d = await client(dm.email);
    expect((await d.post(`/api/studies/${study.code}/snapshots`, { x: 1 })).status).toBe(400);
  });

  it('writes every download to the access log', async () => {
    const before = await AccessLog.count({ where: { userId: stat.user.id, event: 'export' } });
    const c = await client(stat.email);
    await download(c, snapshotId, 'csv', 'deidentified');
    await download(c, snapshotId, 'odm', 'full');
    const logs = await AccessLog.findAll({ where: { userId: stat.user.id, event: 'export' }, order: [['id', 'DESC']], limit: 2 });
    expect(await AccessLog.count({ where: { userId: stat.user.id, event: 'export' } })).toBe(before + 2);
    const detail = (l: AccessLog) => (typeof l.detail === 'string' ? JSON.parse(l.detail) : l.detail) as Record<string, unknown>;
    expect(detail(logs[0])).toMatchObject({ snapshot: snapshotId, format: 'odm', profile: 'full' });
    expect(detail(logs[1])).toMatchObject({ snapshot: snapshotId, format: 'csv', profile: 'deidentified' });
    expect(logs[0].email).toBe(stat.email);
    // Refused downloads leave no export row.
    const m = await client(others.monitor.email);
    await m.get(`/api/studies/${study.code}/snapshots/${snapshotId}/export?format=xlsx`);
    expect(await AccessLog.count({ where: { userId: others.monitor.user.id, event: 'export' } })).toBe(0);
  });
});
