// Export benchmark (npm run bench:export; never run by the tests). In the dedicated benchmark database
// (.data-bench/), a synthetic study of 500 participants × 7 visits × ~60 items and 500 000 audit rows is bulk-inserted
// once (a fixture, kept between runs), snapshotted, and then the spreadsheet export of the snapshot is timed against
// exceljs writing the same cells from memory in the same run. Printed: both times, their ratio (target ≤ 1.5) and the
// peak RSS of the export (target ≤ 400 MB), sampled every 50 ms and from process.resourceUsage().maxRSS.
// Options: --participants N, --audit N, --fresh (build a new benchmark study).
import { spawnSync } from 'node:child_process';
import path from 'node:path';
import { performance } from 'node:perf_hooks';
import { Writable } from 'node:stream';
import { QueryTypes, type InferCreationAttributes } from 'sequelize';
import ExcelJS from 'exceljs';
import { Allocation, AllocationSlot, CrfRecord, Participant, Site, Snapshot, Study, User, sequelize } from '../models';
import { DEMO_STUDY } from '../lib/studies/demo';
import { pinForm } from '../lib/crf/definitions';
import { activateRandomisation } from '../lib/allocation';
import { auditHash, type AuditHashed } from '../lib/audit/chain';
import { createSnapshot, getSnapshot } from '../lib/snapshot';
import { isLockedForAnalysis, lockState, setLock } from '../lib/lock';
import { startExport } from '../exports';
import { dataTables, loadContext, summaryRows } from '../exports/source';
import { WORKBOOK_OPTIONS, fitCell } from '../exports/xlsx';

const args = process.argv.slice(2);
const opt = (name: string, dflt: number) => {
  const i = args.indexOf(`--${name}`);
  return i >= 0 ? Number(args[i + 1]) : dflt;
};
const PARTICIPANTS = opt('participants', 500);
const AUDIT_ROWS = opt('audit', 500_000);
const VISITS = DEMO_STUDY.config.schedule.map((v) => v.key);
const CODE = 'BENCH-EXPORT';
const SITES = ['HHC', 'MLB', 'KVH', 'NPU'];
const mb = (bytes: number) => (bytes / 1024 / 1024).toFixed(0);

/** A follow-up document with three measured fingers: about 60 items with the derived scores. */
function followUp(i: number, v: number) {
  const finger = (hand: string, finger: string, k: number) => ({ hand, finger, mcp_flexion: 60 + ((i + v + k) % 30), pip_flexion: 50 + ((i * 3 + k) % 40), dip_flexion: 20 + ((i + k * 7) % 40), mcp_ext_deficit: (i + k) % 10, pip_ext_deficit: (i * 2 + k) % 25, dip_ext_deficit: (i + v * k) % 15 });
  const data = {
    VISDAT: `2026-0${1 + (v % 9)}-1${i % 10}`,
    goniometry: [finger('right', 'middle', 1), finger('left', 'middle', 2), finger('right', 'ring', 3)],
    grip_right_kg: [20 + (i % 10), 21 + (v % 5), 22.5], grip_left_kg: [40, 41.5, 39 + (i % 4)],
    quickdash: Array.from({ length: 11 }, (_, k) => 1 + ((i + v + k) % 5)),
    pain: (i + v) % 11, guess_arm: ['guess_passive', 'guess_active', 'unknown'][(i + v) % 3], guess_confidence: 1 + ((i + v) % 5),
  };
  const derived = {
    derived_scores: {
      tam_by_finger: data.goniometry.map((g) => ({ hand: g.hand, finger: g.finger, tam: g.mcp_flexion + g.pip_flexion + g.dip_flexion - g.mcp_ext_deficit - g.pip_ext_deficit - g.dip_ext_deficit, tam_pct_contralateral: 80 + (i % 20), grade: 'good' })),
      quickdash_score: 25 + (i % 50), grip_ratio_pct: 50 + (i % 40),
    },
  };
  return { data, derived };
}

async function seed(): Promise<Study> {
  const t0 = performance.now();
  const code = args.includes('--fresh') ? `${CODE}-${Date.now().toString(36).toUpperCase()}` : CODE;
  const study = await Study.create({ code, title: 'Export benchmark (synthetic)', status: 'closed', config: DEMO_STUDY.config });
  const sites: Site[] = [];
  for (const s of SITES) sites.push(await Site.create({ studyId: study.id, code: s, name: `Benchmark ${s}`, timeZone: 'UTC', recruitmentTarget: PARTICIPANTS / 4 }));
  for (const f of ['eligibility', 'consent', 'baseline', 'operation', 'follow_up', 'adverse_event', 'protocol_deviation', 'end_of_participation', 'therapy_session']) await pinForm(study.id, f, 1, { userId: null, role: 'system' });
  const dm = await User.create({ email: `bench-dm-${study.id}@bench.example`, name: 'Benchmark data manager', passwordHash: null, status: 'active', lockedUntil: null, lastLoginAt: null });
  await activateRandomisation({ study, actor: { userId: dm.id, role: 'data_manager' } });
  const ps = await Participant.bulkCreate(
    Array.from({ length: PARTICIPANTS }, (_, i) => ({ studyId: study.id, siteId: sites[i % 4].id, screeningNumber: `B-${i + 1}`, subjectCode: `BENCH-${SITES[i % 4]}-${String(Math.floor(i / 4) + 1).padStart(3, '0')}`, status: 'randomised', createdBy: dm.id, screeningDate: '2026-01-05', age: 20 + (i % 50), sex: i % 2 ? 'F' : 'M', screeningOutcome: 'eligible', screeningReasons: null })),
  );
  const now = new Date();
  for (const [i, p] of ps.entries()) {
    const stratum = `site=${SITES[i % 4]}|fingers=${i % 3 === 0 ? '2+' : '1'}`;
    const slot = (await AllocationSlot.findOne({ where: { studyId: study.id, stratum, participantId: null }, order: [['slot', 'ASC']] }))!;
    await slot.update({ participantId: p.id, usedAt: now });
    await Allocation.create({ studyId: study.id, siteId: p.siteId, participantId: p.id, slotId: slot.id, stratum, arm: slot.arm, allocatedBy: dm.id, allocatedAt: now });
  }
  const records: Record<string, unknown>[] = [];
  for (const [i, p] of ps.entries()) {
    for (const [v, visitKey] of VISITS.entries()) {
      const { data, derived } = followUp(i, v);
      records.push({ studyId: study.id, siteId: p.siteId, participantId: p.id, formKey: 'follow_up', formVersion: 1, visitKey, instance: 1, status: 'submitted', data, derived, review: [], lockVersion: 1, createdBy: dm.id, updatedBy: dm.id, submittedAt: now, voidReason: null });
    }
  }
  const recIds: number[] = [];
  for (let i = 0; i < records.length; i += 500) for (const r of await CrfRecord.bulkCreate(records.slice(i, i + 500) as unknown as InferCreationAttributes<CrfRecord>[])) recIds.push(r.id);

  // Audit rows in the real hash chain, in transactions of 5000 rows that lock the chain head like appendAudit does.
  const base = Date.parse('2026-01-05T08:00:00Z');
  const paths = ['/goniometry/0/pip_flexion', '/goniometry/1/dip_flexion', '/pain', '/quickdash/3', '/grip_right_kg/1', '/VISDAT'];
  for (let done = 0; done < AUDIT_ROWS; ) {
    const n = Math.min(5000, AUDIT_ROWS - done);
    await sequelize.transaction(async (t) => {
      const [head] = await sequelize.query<{ hash: string }>('SELECT hash FROM audit_chain_head WHERE id = 1 FOR UPDATE', { type: QueryTypes.SELECT, transaction: t });
      let prev = head.hash;
      const values: unknown[] = [];
      for (let k = 0; k < n; k++) {
        const j = done + k;
        const at = new Date(base + j * 1500).toISOString().replace('T', ' ').replace('Z', '000');
        const row: AuditHashed = {
          at, actorUserId: dm.id, actorRole: j % 3 ? 'assessor' : 'coordinator', studyId: study.id, siteId: sites[j % 4].id, entityType: 'crf_record', entityId: String(recIds[j % recIds.length]),
          action: 'item', itemPath: paths[j % paths.length], oldValue: JSON.stringify(j % 90), newValue: JSON.stringify((j + 7) % 90), reason: j % 5 ? 'Transcription error' : 'derived', requestId: `bench-${Math.floor(j / 20)}`, formVersion: 1, prevHash: prev,
        };
        const hash = auditHash(row);
        values.push(row.at, row.actorUserId, row.actorRole, row.studyId, row.siteId, row.entityType, row.entityId, row.action, row.itemPath, row.oldValue, row.newValue, row.reason, row.requestId, row.formVersion, row.prevHash, hash);
        prev = hash;
      }
      await sequelize.query(
        `INSERT INTO audit_events (at, actor_user_id, actor_role, study_id, site_id, entity_type, entity_id, action, item_path, old_value, new_value, reason, request_id, form_version, prev_hash, hash) VALUES ${Array.from({ length: n }, () => '(?,?,?,?,?,?,?,?,?,?,?,?,?,?,?,?)').join(',')}`,
        { replacements: values, transaction: t, type: QueryTypes.INSERT },
      );
      await sequelize.query('UPDATE audit_chain_head SET hash = ?, last_id = LAST_INSERT_ID() + ? WHERE id = 1', { replacements: [prev, n - 1], transaction: t });
    });
    done += n;
    if (done % 100_000 === 0) console.log(`[bench] audit rows: ${done}`);
  }
  console.log(`[bench] seeded ${PARTICIPANTS} participants, ${records.length} records, ${AUDIT_ROWS} audit rows in ${((performance.now() - t0) / 1000).toFixed(1)} s`);
  return study;
}

/** A sink that counts bytes and throws them away (both runs write to one of these). */
function nullSink() {
  let bytes = 0;
  const w = new Writable({
    write(chunk: Buffer, _e, cb) {
      bytes += chunk.length;
      cb();
    },
  });
  return { w, bytes: () => bytes };
}

async function main() {
  if (args.includes('--seed-only')) {
    await seed();
    return;
  }
  let study = await Study.findOne({ where: { code: CODE } });
  if (!study || args.includes('--fresh')) {
    // Seeding runs in its own process, so its memory does not count towards the export's peak.
    const tsx = path.join(process.cwd(), 'node_modules', '.bin', 'tsx');
    const r = spawnSync(tsx, ['--conditions=react-server', 'bench/export.ts', '--seed-only', ...args], { stdio: 'inherit', env: process.env });
    if (r.status !== 0) throw new Error('seeding the benchmark study failed');
    study = await Study.findOne({ where: args.includes('--fresh') ? {} : { code: CODE }, order: [['id', 'DESC']] });
  }
  const dm = (await User.findOne({ where: { email: `bench-dm-${study!.id}@bench.example` } }))!;
  const [{ n: auditRows }] = await sequelize.query<{ n: number }>('SELECT COUNT(*) AS n FROM audit_events WHERE study_id = ?', { replacements: [study!.id], type: QueryTypes.SELECT });
  console.log(`[bench] study ${study!.code}: ${await Participant.count({ where: { studyId: study!.id } })} participants, ${await CrfRecord.count({ where: { studyId: study!.id } })} records, ${auditRows} audit rows`);

  let snap = (await Snapshot.findOne({ where: { studyId: study!.id }, order: [['id', 'DESC']] })) ? await getSnapshot(study!.id, (await Snapshot.findOne({ where: { studyId: study!.id }, order: [['id', 'DESC']] }))!.id) : null;
  if (!snap || args.includes('--new-snapshot')) {
    const t = performance.now();
    const dmActor = { userId: dm.id, role: 'data_manager' as const };
    // A snapshot exists only under the study's hard lock; the hard lock takes the first one itself.
    if (!(await isLockedForAnalysis(study!.id))) {
      if ((await lockState(study!.id, null)).study.level === 'open') await setLock({ studyId: study!.id, siteId: null, level: 'soft', actor: dmActor });
      const locked = await setLock({ studyId: study!.id, siteId: null, level: 'hard', override: true, reason: 'benchmark fixture', actor: dmActor });
      const made = 'snapshot' in locked ? locked.snapshot : undefined;
      if (!made || 'error' in made) throw new Error(`the hard lock took no snapshot: ${JSON.stringify(made)}`);
      snap = await getSnapshot(study!.id, made.id);
    } else {
      snap = await createSnapshot({ studyId: study!.id, actor: dmActor });
    }
    console.log(`[bench] snapshot ${snap.id} written in ${((performance.now() - t) / 1000).toFixed(1)} s (audit_trail.jsonl ${snap.counts['audit_trail.jsonl']} rows), commitment ${snap.commitment.status}`);
  }

  // 1. The export, streamed from the snapshot in object storage; RSS sampled while it runs.
  global.gc?.();
  const rssBefore = process.memoryUsage().rss;
  let peak = rssBefore;
  const parts = { heapUsed: 0, external: 0, arrayBuffers: 0 };
  const sampler = setInterval(() => {
    const m = process.memoryUsage();
    peak = Math.max(peak, m.rss);
    parts.heapUsed = Math.max(parts.heapUsed, m.heapUsed);
    parts.external = Math.max(parts.external, m.external);
    parts.arrayBuffers = Math.max(parts.arrayBuffers, m.arrayBuffers);
  }, 50);
  const t1 = performance.now();
  const sink1 = nullSink();
  const f = await startExport({ snapshot: snap, format: 'xlsx', profile: 'full', studyCode: study!.code });
  await new Promise<void>((resolve, reject) => {
    f.stream.pipe(sink1.w);
    sink1.w.on('finish', resolve);
    f.stream.on('error', reject);
  });
  const exportMs = performance.now() - t1;
  clearInterval(sampler);
  peak = Math.max(peak, process.memoryUsage().rss);
  const maxRssExport = process.resourceUsage().maxRSS * 1024;

  if (args.includes('--export-only')) {
    console.log(`[bench] export from snapshot: ${(exportMs / 1000).toFixed(2)} s, peak RSS ${mb(peak)} MB sampled, ${mb(maxRssExport)} MB maxRSS, before ${mb(rssBefore)} MB; heap used ${mb(parts.heapUsed)} MB, external ${mb(parts.external)} MB, array buffers ${mb(parts.arrayBuffers)} MB`);
    await sequelize.close();
    return;
  }
  // 2. The baseline: the same cells, read into memory first (not timed), then written by exceljs from memory.
  const ctx = await loadContext(snap, snap.storagePrefix, 'full');
  const sheets: { name: string; rows: unknown[][] }[] = [{ name: 'snapshot', rows: [['key', 'value'], ...summaryRows(ctx).map(([k, v]) => [k, v])] }];
  let cells = 0;
  for (const table of dataTables(ctx)) {
    const rows: unknown[][] = [table.columns.map((c) => c.key), table.columns.map((c) => c.label)];
    for await (const r of table.rows()) rows.push(r);
    sheets.push({ name: table.name, rows });
    cells += rows.reduce((s, r) => s + r.length, 0);
  }
  const t2 = performance.now();
  const sink2 = nullSink();
  const wb = new ExcelJS.stream.xlsx.WorkbookWriter({ stream: sink2.w, ...WORKBOOK_OPTIONS });
  for (const s of sheets) {
    const ws = wb.addWorksheet(s.name);
    for (const r of s.rows) ws.addRow(r.map(fitCell) as ExcelJS.CellValue[]).commit();
    ws.commit();
  }
  await wb.commit();
  await new Promise((r) => (sink2.w.writableFinished ? r(null) : sink2.w.on('finish', r)));
  const baselineMs = performance.now() - t2;

  const ratio = exportMs / baselineMs;
  console.log('');
  console.log(`[bench] cells written: ${cells} in ${sheets.length} sheets`);
  console.log(`[bench] export from snapshot:        ${(exportMs / 1000).toFixed(2)} s, ${mb(sink1.bytes())} MB`);
  console.log(`[bench] exceljs from memory (base):  ${(baselineMs / 1000).toFixed(2)} s, ${mb(sink2.bytes())} MB`);
  console.log(`[bench] ratio export / baseline:     ${ratio.toFixed(2)}  (target ≤ 1.5: ${ratio <= 1.5 ? 'met' : 'NOT met'})`);
  console.log(`[bench] peak RSS during the export:  ${mb(peak)} MB sampled, ${mb(maxRssExport)} MB maxRSS  (target ≤ 400 MB: ${Math.max(peak, maxRssExport) <= 400 * 1024 * 1024 ? 'met' : 'NOT met'})`);
  console.log(`[bench] RSS before the export:       ${mb(rssBefore)} MB (peaks during it: heap used ${mb(parts.heapUsed)} MB, external ${mb(parts.external)} MB, array buffers ${mb(parts.arrayBuffers)} MB)`);
  await sequelize.close();
}

main().catch(async (e) => {
  console.error(e);
  await sequelize.close().catch(() => {});
  process.exit(1);
});
