// The open-standard export: CDISC ODM 1.3.2 XML, written with xmlbuilder2's callback builder and flushed to the
// destination in chunks. Study/GlobalVariables/BasicDefinitions/MetaDataVersion from the form definitions of the
// snapshot (one FormDef per form, ItemGroupDef per form and per repeating group, ItemDef with DataType, RangeCheck,
// MeasurementUnitRef and CodeList), AdminData (users and sites), ClinicalData (SubjectData › StudyEventData ›
// FormData › ItemGroupData › ItemData) and the audit trail as the AuditRecords pool of ClinicalData.
// The mapping from JSON Schema is the project's own convention (STANDARDS.md §4.4); OIDs: ST., MDV., SE., F., IG., IT.,
// CL., MU., USR., LOC. followed by the study, visit, form and item keys.
import { once } from 'node:events';
import { randomBytes } from 'node:crypto';
import type { Writable } from 'node:stream';
import { createCB } from 'xmlbuilder2';
import { readRows } from '@/lib/snapshot/read';
import { deidentifyValue, flattenRecord, isDateFormat, schemaItems, type ItemDef } from '@/lib/snapshot/items';
import { deidAuditValues, type AuditRow, type ExportContext, type RecordRow } from './source';

export const ODM_NAMESPACE = 'http://www.cdisc.org/ns/odm/v1.3';
const SOURCE_SYSTEM_VERSION = '0.1.0';

const oidPart = (s: string) => s.replace(/[^A-Za-z0-9_.-]/g, '_');
export const eventOid = (visitKey: string) => (visitKey ? `SE.${oidPart(visitKey)}` : 'SE.COMMON');
export const formOid = (formKey: string) => `F.${oidPart(formKey)}`;
/** The item group of an item: the form's own group, or the repeating group of its innermost `*`. */
export function groupOf(formKey: string, itemKey: string): { oid: string; pattern: string | null } {
  const parts = itemKey.split('.');
  const star = parts.lastIndexOf('*');
  if (star < 0) return { oid: `IG.${oidPart(formKey)}`, pattern: null };
  const pattern = parts.slice(0, star + 1).join('.');
  return { oid: `IG.${oidPart(formKey)}.${oidPart(parts.slice(0, star).filter((p) => p !== '*').join('.'))}`, pattern };
}
export const itemOid = (formKey: string, itemKey: string) => `IT.${oidPart(formKey)}.${oidPart(itemKey.split('.').filter((p) => p !== '*').join('.'))}`;

function dataType(it: ItemDef, deid: boolean): string {
  if (it.type === 'integer') return 'integer';
  if (it.type === 'number') return 'float';
  if (it.type === 'boolean') return 'boolean';
  if (it.type === 'string') {
    if (isDateFormat(it.format) && deid) return 'integer';
    if (it.format === 'date') return 'date';
    if (it.format === 'date-time') return 'datetime';
    if (it.format === 'time') return 'time';
    return it.codes ? 'text' : 'string';
  }
  return 'string';
}

const valueText = (v: unknown) => (typeof v === 'object' ? JSON.stringify(v) : String(v));

/** Streams the ODM document to `out` (ended when done). */
export async function writeOdm(ctx: ExportContext, out: Writable): Promise<void> {
  let buf = '';
  let failed: Error | null = null;
  const xml = createCB({ prettyPrint: true });
  xml.on('data', (chunk: string) => {
    buf += chunk;
  });
  xml.on('error', (e: Error) => {
    failed = e;
  });
  const flush = async (force = false) => {
    if (failed) throw failed;
    if (!force && buf.length < 64 * 1024) return;
    const chunk = buf;
    buf = '';
    if (!out.write(chunk)) await once(out, 'drain');
  };

  const studyOid = `ST.${oidPart(ctx.study.code)}`;
  const mdvOid = `MDV.${ctx.snapshot.id}`;
  xml.dec({ version: '1.0', encoding: 'UTF-8' });
  xml.ele('ODM', {
    xmlns: ODM_NAMESPACE,
    FileType: 'Snapshot',
    Granularity: 'All',
    FileOID: `Excursion.${oidPart(ctx.study.code)}.snapshot-${ctx.snapshot.id}.${ctx.profile}.${randomBytes(6).toString('hex')}`,
    CreationDateTime: new Date().toISOString(),
    AsOfDateTime: ctx.snapshot.createdAt,
    ODMVersion: '1.3.2',
    Originator: 'Excursion',
    SourceSystem: 'Excursion',
    SourceSystemVersion: SOURCE_SYSTEM_VERSION,
    Description: `Snapshot ${ctx.snapshot.id} (${ctx.manifest.snapshotHash}), ${ctx.deid ? 'de-identified profile' : 'full profile'}`,
  });

  // ---------------------------------------------------------------- metadata
  // One FormDef per form over every version in the snapshot; an item keeps the definition of the newest version.
  type FormMeta = { key: string; title: string; repeating: boolean; items: Map<string, ItemDef>; groups: Map<string, { oid: string; name: string; repeating: boolean; items: string[] }> };
  const formsMeta = new Map<string, FormMeta>();
  for (const f of [...ctx.forms].sort((a, b) => a.formKey.localeCompare(b.formKey) || a.version - b.version)) {
    const m = formsMeta.get(f.formKey) ?? { key: f.formKey, title: f.title, repeating: false, items: new Map(), groups: new Map() };
    m.title = f.title;
    for (const it of schemaItems(f.schema)) {
      if (ctx.deid && it.freeText) continue;
      m.items.set(it.key, it);
      const g = groupOf(f.formKey, it.key);
      const group = m.groups.get(g.oid) ?? { oid: g.oid, name: g.pattern ? `${f.title}: ${g.pattern}` : f.title, repeating: g.pattern !== null, items: [] };
      if (!group.items.includes(it.key)) group.items.push(it.key);
      m.groups.set(g.oid, group);
    }
    formsMeta.set(f.formKey, m);
  }
  const events = new Map<string, Set<string>>();
  for (const r of ctx.records.values()) {
    (events.get(r.visitKey) ?? events.set(r.visitKey, new Set()).get(r.visitKey)!).add(r.formKey);
    if (r.instance > 1) formsMeta.get(r.formKey) && (formsMeta.get(r.formKey)!.repeating = true);
  }
  const schedule = ((ctx.study.config.schedule ?? []) as { key?: string; label?: string }[]).filter((v) => typeof v.key === 'string');
  const eventOrder = [...events.keys()].sort((a, b) => {
    const ia = schedule.findIndex((v) => v.key === a);
    const ib = schedule.findIndex((v) => v.key === b);
    return (ia < 0 ? 1e6 : ia) - (ib < 0 ? 1e6 : ib) || a.localeCompare(b);
  });
  const units = new Set<string>();
  for (const m of formsMeta.values()) for (const it of m.items.values()) if (it.units) units.add(it.units);

  xml.ele('Study', { OID: studyOid });
  xml.ele('GlobalVariables').ele('StudyName').txt(ctx.study.code).up().ele('StudyDescription').txt(ctx.study.title).up().ele('ProtocolName').txt(ctx.study.code).up().up();
  if (units.size) {
    xml.ele('BasicDefinitions');
    for (const u of units) xml.ele('MeasurementUnit', { OID: `MU.${oidPart(u)}`, Name: u }).ele('Symbol').ele('TranslatedText', { 'xml:lang': 'en' }).txt(u).up().up().up();
    xml.up();
  }
  xml.ele('MetaDataVersion', { OID: mdvOid, Name: `Snapshot ${ctx.snapshot.id}`, Description: `Form versions: ${ctx.forms.map((f) => `${f.formKey} v${f.version}`).join(', ')}` });
  xml.ele('Protocol');
  eventOrder.forEach((e, i) => xml.ele('StudyEventRef', { StudyEventOID: eventOid(e), OrderNumber: String(i + 1), Mandatory: 'No' }).up());
  xml.up();
  for (const e of eventOrder) {
    const label = schedule.find((v) => v.key === e)?.label ?? (e || 'Forms outside the visit schedule');
    xml.ele('StudyEventDef', { OID: eventOid(e), Name: label, Repeating: e ? 'No' : 'Yes', Type: e ? 'Scheduled' : 'Common' });
    [...events.get(e)!].sort().forEach((f, i) => xml.ele('FormRef', { FormOID: formOid(f), OrderNumber: String(i + 1), Mandatory: 'No' }).up());
    xml.up();
  }
  for (const m of formsMeta.values()) {
    xml.ele('FormDef', { OID: formOid(m.key), Name: m.title, Repeating: m.repeating ? 'Yes' : 'No' });
    [...m.groups.values()].forEach((g, i) => xml.ele('ItemGroupRef', { ItemGroupOID: g.oid, OrderNumber: String(i + 1), Mandatory: 'No' }).up());
    xml.up();
  }
  for (const m of formsMeta.values()) {
    for (const g of m.groups.values()) {
      xml.ele('ItemGroupDef', { OID: g.oid, Name: g.name, Repeating: g.repeating ? 'Yes' : 'No' });
      g.items.forEach((k, i) => xml.ele('ItemRef', { ItemOID: itemOid(m.key, k), OrderNumber: String(i + 1), Mandatory: 'No', ...(m.items.get(k)!.derived ? { Role: 'derived' } : {}) }).up());
      xml.up();
    }
  }
  for (const m of formsMeta.values()) {
    for (const it of m.items.values()) {
      const dt = dataType(it, ctx.deid);
      xml.ele('ItemDef', { OID: itemOid(m.key, it.key), Name: it.key, DataType: dt, Origin: it.derived ? 'Derived' : 'CRF' });
      xml.ele('Question').ele('TranslatedText', { 'xml:lang': 'en' }).txt(ctx.deid && isDateFormat(it.format) ? `${it.label} (study day)` : it.label).up().up();
      if (it.units) xml.ele('MeasurementUnitRef', { MeasurementUnitOID: `MU.${oidPart(it.units)}` }).up();
      if (it.minimum !== null) xml.ele('RangeCheck', { Comparator: 'GE', SoftHard: 'Hard' }).ele('CheckValue').txt(String(it.minimum)).up().up();
      if (it.maximum !== null) xml.ele('RangeCheck', { Comparator: 'LE', SoftHard: 'Hard' }).ele('CheckValue').txt(String(it.maximum)).up().up();
      if (it.codes) xml.ele('CodeListRef', { CodeListOID: `CL.${oidPart(m.key)}.${oidPart(it.key.replace(/\.\*/g, ''))}` }).up();
      xml.up();
    }
  }
  for (const m of formsMeta.values()) {
    for (const it of m.items.values()) {
      if (!it.codes) continue;
      const dt = it.type === 'integer' ? 'integer' : it.type === 'number' ? 'float' : 'text';
      xml.ele('CodeList', { OID: `CL.${oidPart(m.key)}.${oidPart(it.key.replace(/\.\*/g, ''))}`, Name: it.label, DataType: dt });
      for (const c of it.codes) xml.ele('CodeListItem', { CodedValue: String(c.value) }).ele('Decode').ele('TranslatedText', { 'xml:lang': 'en' }).txt(c.label).up().up().up();
      xml.up();
    }
  }
  xml.up(); // MetaDataVersion
  xml.up(); // Study
  await flush();

  // ---------------------------------------------------------------- admin data
  xml.ele('AdminData', { StudyOID: studyOid });
  xml.ele('User', { OID: 'USR.SYSTEM', UserType: 'Other' }).ele('DisplayName').txt('Excursion (automatic)').up().up();
  for (const u of ctx.users.values()) {
    xml.ele('User', { OID: `USR.${u.id}`, UserType: 'Other' });
    if (ctx.deid) xml.ele('DisplayName').txt(ctx.userLabel(u.id) ?? '').up();
    else xml.ele('LoginName').txt(u.email).up().ele('DisplayName').txt(u.name).up().ele('FullName').txt(u.name).up();
    xml.up();
  }
  xml.ele('Location', { OID: 'LOC.STUDY', Name: `${ctx.study.code} study office`, LocationType: 'Sponsor' }).ele('MetaDataVersionRef', { StudyOID: studyOid, MetaDataVersionOID: mdvOid, EffectiveDate: ctx.snapshot.createdAt.slice(0, 10) }).up().up();
  for (const s of ctx.sites) xml.ele('Location', { OID: `LOC.${oidPart(s.code)}`, Name: s.name, LocationType: 'Site' }).ele('MetaDataVersionRef', { StudyOID: studyOid, MetaDataVersionOID: mdvOid, EffectiveDate: ctx.snapshot.createdAt.slice(0, 10) }).up().up();
  xml.up();
  await flush();

  // ---------------------------------------------------------------- clinical data
  xml.ele('ClinicalData', { StudyOID: studyOid, MetaDataVersionOID: mdvOid });
  // The record files are ordered by participant: merge them participant by participant (one record per file in memory).
  const formKeys = [...formsMeta.keys()].filter((k) => ctx.has(`records.${k}.jsonl`));
  const heads = formKeys.map((k) => {
    const it = readRows<RecordRow>(ctx.prefix, `records.${k}.jsonl`)[Symbol.asyncIterator]();
    return { it, head: null as RecordRow | null, done: false };
  });
  for (const h of heads) {
    const n = await h.it.next();
    h.done = !!n.done;
    h.head = n.done ? null : n.value;
  }
  for (const p of ctx.participants.values()) {
    const recs: RecordRow[] = [];
    for (const h of heads) {
      while (!h.done && h.head && h.head.participantId === p.id) {
        recs.push(h.head);
        const n = await h.it.next();
        h.done = !!n.done;
        h.head = n.done ? null : n.value;
      }
    }
    xml.ele('SubjectData', { SubjectKey: ctx.subjectKey(p.id) ?? String(p.id) });
    if (p.siteId) xml.ele('SiteRef', { LocationOID: `LOC.${oidPart(ctx.siteCode(p.siteId) ?? '')}` }).up();
    const byEvent = new Map<string, RecordRow[]>();
    for (const r of recs) (byEvent.get(r.visitKey) ?? byEvent.set(r.visitKey, []).get(r.visitKey)!).push(r);
    for (const e of eventOrder) {
      const list = byEvent.get(e);
      if (!list) continue;
      xml.ele('StudyEventData', { StudyEventOID: eventOid(e) });
      list.sort((a, b) => a.formKey.localeCompare(b.formKey) || a.instance - b.instance);
      for (const r of list) {
        const def = ctx.formDefs.get(`${r.formKey}@${r.formVersion}`);
        const meta = formsMeta.get(r.formKey);
        xml.ele('FormData', { FormOID: formOid(r.formKey), ...(meta?.repeating ? { FormRepeatKey: String(r.instance) } : {}) });
        if (def && meta) {
          const groups = new Map<string, { oid: string; repeatKey: string | null; items: [string, unknown][] }>();
          for (const v of flattenRecord(def.schema, { ...r.data, ...r.derived })) {
            const it = def.items.get(v.item);
            if (!it || !meta.items.has(v.item)) continue;
            const value = ctx.deid ? deidentifyValue(it, v.value, ctx.refDate.get(r.participantId) ?? null) : v.value;
            if (value === undefined || value === null) continue;
            const g = groupOf(r.formKey, v.item);
            const cp = v.column.split('.');
            const ip = v.item.split('.');
            const repeatKey = g.pattern ? ip.map((x, i) => (x === '*' ? cp[i] : null)).filter((x) => x !== null).join('.') : null;
            const gk = `${g.oid}#${repeatKey ?? ''}`;
            (groups.get(gk) ?? groups.set(gk, { oid: g.oid, repeatKey, items: [] }).get(gk)!).items.push([itemOid(r.formKey, v.item), value]);
          }
          for (const g of groups.values()) {
            xml.ele('ItemGroupData', { ItemGroupOID: g.oid, ...(g.repeatKey ? { ItemGroupRepeatKey: g.repeatKey } : {}) });
            for (const [oid, value] of g.items) xml.ele('ItemData', { ItemOID: oid, Value: valueText(value) }).up();
            xml.up();
          }
        }
        xml.up(); // FormData
      }
      xml.up(); // StudyEventData
    }
    xml.up(); // SubjectData
    await flush();
  }

  // The audit trail, one AuditRecord per audit row (who, where, when, why). The de-identified profile keeps only the
  // year of the time stamp (Safe Harbor allows years; the study day travels in SourceID) and no free-text reasons.
  xml.ele('AuditRecords');
  for await (const r of readRows<AuditRow>(ctx.prefix, 'audit_trail.jsonl')) {
    const pid = ctx.auditParticipant(r);
    const site = ctx.siteCode(r.siteId);
    xml.ele('AuditRecord', { ID: `AR.${r.id}`, EditPoint: r.actorRole === 'monitor' || r.actorRole === 'coordinator' || r.actorRole === 'assessor' || r.actorRole === 'therapist' || r.actorRole === 'investigator' ? 'Monitoring' : 'DataManagement' });
    xml.ele('UserRef', { UserOID: r.actorUserId != null ? `USR.${r.actorUserId}` : 'USR.SYSTEM' }).up();
    xml.ele('LocationRef', { LocationOID: site ? `LOC.${oidPart(site)}` : 'LOC.STUDY' }).up();
    if (ctx.deid) {
      const v = deidAuditValues(ctx, r, pid);
      xml.ele('DateTimeStamp').txt(`${r.at.slice(0, 4)}-01-01T00:00:00Z`).up();
      if (v.reason) xml.ele('ReasonForChange').txt(v.reason).up();
      xml.ele('SourceID').txt(`audit ${r.id}; ${r.entityType} ${r.entityType === 'participant' || r.entityType === 'allocation' ? ctx.subjectKey(pid) : r.entityId}; ${r.action}${r.itemPath ? ` ${r.itemPath}` : ''}; study day ${ctx.day(pid, r.at) ?? 'n/a'}`).up();
    } else {
      xml.ele('DateTimeStamp').txt(r.at).up();
      if (r.reason) xml.ele('ReasonForChange').txt(r.reason).up();
      xml.ele('SourceID').txt(`audit ${r.id}; ${r.entityType} ${r.entityId}; ${r.action}${r.itemPath ? ` ${r.itemPath}` : ''}; ${r.hash}`).up();
    }
    xml.up();
    await flush();
  }
  xml.up(); // AuditRecords
  xml.up(); // ClinicalData
  xml.up(); // ODM
  xml.end();
  await flush(true);
  out.end();
  await once(out, 'finish');
}
