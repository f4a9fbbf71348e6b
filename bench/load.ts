// Load benchmarks with autocannon against the running server (started by `npm run bench`, which sets
// EXCURSION_BENCH=1 so the bare baseline routes exist). Every figure is a ratio against a baseline measured in the
// same run on the same server:
//   (a) form save (validation, diff, audit rows, transaction) at 20 concurrent clients vs the bare route handler
//       — target ≥ 50 % of the bare route's req/s and p95 ≤ 150 ms;
//   (b) 100 concurrent randomisations in a study of its own — 0 duplicate allocations, 0 gaps in the slot sequence
//       of each stratum;
//   (c) the dashboard API with 2,000 participants vs the same recruitment counts from one SQL query behind the same
//       gate — target ≤ 2× the SQL route's mean latency.
// Prints a table; exits 1 when a correctness check fails (targets that are missed are reported, not fatal).
import autocannon from 'autocannon';
import { Op, QueryTypes } from 'sequelize';
import { pinForm } from '@/lib/crf/definitions';
import { saveRecord } from '@/lib/crf/records';
import { DEMO_STUDY } from '@/lib/studies/demo';
import { Allocation, AllocationSlot, CrfRecord, Participant, Site, Study, sequelize } from '@/models';
import { makeUser, TEST_PASSWORD, uniq } from '../tests/support/factories';
import { BASE, signedIn } from '../tests/support/http';
import { ensureActivated, example, readyParticipant } from '../tests/support/ready';

const SECONDS = Number(process.env.BENCH_SECONDS ?? 10);
const TODAY = '2026-12-02';
const FORMS = ['eligibility', 'consent', 'baseline', 'operation', 'follow_up', 'adverse_event', 'protocol_deviation', 'end_of_participation', 'therapy_session'];

type Run = { name: string; rps: number; mean: number; p50: number; p95: number; p99: number; total: number; non2xx: number; errors: number };

const pct = (xs: number[], p: number) => {
  if (!xs.length) return NaN;
  const s = [...xs].sort((a, b) => a - b);
  return s[Math.min(s.length - 1, Math.ceil((p / 100) * s.length) - 1)];
};

/** One autocannon run; per-request latencies are kept to report p95 (autocannon's own table stops at p97.5). */
async function cannon(name: string, opts: autocannon.Options): Promise<Run> {
  const times: number[] = [];
  // Without a callback autocannon answers an instance that is also a promise of the result.
  const inst = autocannon({ duration: SECONDS, ...opts }) as unknown as autocannon.Instance & Promise<autocannon.Result>;
  inst.on('response', (_c: unknown, _status: number, _bytes: number, ms: number) => times.push(ms));
  const r = await inst;
  return { name, rps: r.requests.average, mean: r.latency.average, p50: pct(times, 50), p95: pct(times, 95), p99: pct(times, 99), total: r.requests.total, non2xx: r.non2xx, errors: r.errors + r.timeouts };
}

async function benchStudy() {
  const code = uniq('BENCH').toUpperCase();
  const config = { ...DEMO_STUDY.config, randomisation: { ...DEMO_STUDY.config.randomisation, subjectPrefix: code } };
  const study = await Study.create({ code, title: 'Load benchmark study', config, status: 'recruiting' });
  const sites = [];
  for (const s of [{ code: 'BA', name: 'Bench Alpha' }, { code: 'BB', name: 'Bench Beta' }]) sites.push(await Site.create({ studyId: study.id, code: s.code, name: s.name, timeZone: 'UTC', recruitmentTarget: 1000 }));
  for (const f of FORMS) await pinForm(study.id, f, 1, { userId: null, role: 'system' });
  await ensureActivated(study);
  const coord = await makeUser([{ role: 'coordinator', site: 'BA', studyId: study.id }, { role: 'coordinator', site: 'BB', studyId: study.id }]);
  const inv = await makeUser([{ role: 'investigator', site: null, studyId: study.id }]);
  return { study, sites, coord, inv };
}

async function main() {
  console.log(`[bench] server ${BASE}, ${SECONDS} s per run`);
  const { study, sites, coord, inv } = await benchStudy();
  const failures: string[] = [];

  // ---------------------------------------------------------------- (b) 100 concurrent randomisations
  console.log('[bench] preparing 100 participants ready to randomise…');
  const ready: { id: number; site: string }[] = [];
  for (let i = 0; i < 100; i++) {
    const site = sites[i % 2];
    const p = await readyParticipant(study, site, { coordinatorId: coord.user.id, fingers: i % 3 === 0 ? 2 : 1 });
    ready.push({ id: p.id, site: site.code });
  }
  const cc = await signedIn(coord.email, TEST_PASSWORD);
  const t0 = performance.now();
  const answers = await Promise.all(ready.map((p) => cc.post(`/api/studies/${study.code}/sites/${p.site}/participants/${p.id}/randomise`, { confirm: true })));
  const randMs = performance.now() - t0;
  const ok = answers.filter((a) => a.status === 200).length;
  const allocs = await Allocation.findAll({ where: { studyId: study.id } });
  const slots = await AllocationSlot.findAll({ where: { studyId: study.id, participantId: { [Op.ne]: null } }, order: [['stratum', 'ASC'], ['slot', 'ASC']] });
  const dupParticipants = allocs.length - new Set(allocs.map((a) => a.participantId)).size;
  const dupSlots = allocs.length - new Set(allocs.map((a) => a.slotId)).size;
  const byStratum = new Map<string, number[]>();
  for (const s of slots) byStratum.set(s.stratum, [...(byStratum.get(s.stratum) ?? []), s.slot]);
  let gaps = 0;
  for (const used of byStratum.values()) used.forEach((slot, i) => { if (slot !== i + 1) gaps++; });
  const subjectCodes = (await Participant.findAll({ where: { studyId: study.id, subjectCode: { [Op.ne]: null } } })).map((p) => p.subjectCode);
  const dupCodes = subjectCodes.length - new Set(subjectCodes).size;
  if (ok !== 100) failures.push(`randomisation: ${ok}/100 answered 200 (${[...new Set(answers.filter((a) => a.status !== 200).map((a) => `${a.status} ${a.body?.error?.code}`))].join(', ')})`);
  if (allocs.length !== 100 || slots.length !== 100) failures.push(`randomisation: ${allocs.length} allocations, ${slots.length} used slots (want 100 each)`);
  if (dupParticipants || dupSlots || dupCodes) failures.push(`randomisation: duplicates — participants ${dupParticipants}, slots ${dupSlots}, subject codes ${dupCodes}`);
  if (gaps) failures.push(`randomisation: ${gaps} gaps in the slot sequences`);

  // ---------------------------------------------------------------- (a) form save vs bare route
  console.log('[bench] preparing 40 draft records for the save benchmark…');
  const target = ready[0];
  const site = sites.find((s) => s.code === target.site)!;
  const queue: { instance: number; version: number; n: number }[] = [];
  for (let instance = 1; instance <= 40; instance++) {
    const r = await saveRecord({ study, siteId: site.id, participantId: target.id, formKey: 'adverse_event', instance, data: example('adverse_event'), intent: 'draft', baseVersion: null, actor: { userId: coord.user.id, roles: ['coordinator'] }, today: TODAY });
    queue.push({ instance, version: r.lockVersion, n: 0 });
  }
  const formUrl = (i: number) => `/api/studies/${study.code}/sites/${site.code}/participants/${target.id}/forms/adverse_event?instance=${i}`;
  const cookie = cc.cookieHeader();
  const bare = await cannon('bare route (GET /api/bench/bare)', { url: `${BASE}/api/bench/bare`, connections: 20 });
  let stale = 0;
  const saveRun = (name: string, connections: number) => cannon(name, {
    url: BASE,
    connections,
    headers: { cookie, 'content-type': 'application/json', accept: 'application/json' },
    requests: [
      {
        method: 'PUT',
        // Each request takes a record nobody is saving at the moment, changes one item and sends the version it
        // read; the answer's version goes back with the record. Connections never race for one record.
        setupRequest: (req: any, context: any) => {
          const rec = queue.shift()!;
          rec.n++;
          context.rec = rec;
          return { ...req, path: formUrl(rec.instance), body: JSON.stringify({ data: { ...example('adverse_event'), AETERM: `Adhesions, check ${rec.n}` }, intent: 'draft', baseVersion: rec.version }) };
        },
        onResponse: (status: number, body: string, context: any) => {
          const rec = context.rec;
          if (status === 200) rec.version = JSON.parse(body).lockVersion;
          else if (status === 409) {
            stale++;
            rec.version = JSON.parse(body).error?.current?.lockVersion ?? rec.version;
          }
          queue.push(rec);
        },
      } as any,
    ],
  });
  const save = await saveRun('form save (PUT adverse_event draft, 1 item changed)', 20);
  // One client at a time: the cost of one request without queueing, for both.
  const bare1 = await cannon('bare route, 1 connection', { url: `${BASE}/api/bench/bare`, connections: 1 });
  // Statements MariaDB ran per request (its global Questions counter; nothing else queries during these runs).
  const questions = async () => Number((await sequelize.query<{ Value: string }>("SHOW GLOBAL STATUS LIKE 'Questions'", { type: QueryTypes.SELECT }))[0].Value);
  const q0 = await questions();
  const save1 = await saveRun('form save, 1 connection', 1);
  const statementsPerSave = (await questions() - q0 - 1) / save1.total;
  const saved = await CrfRecord.count({ where: { participantId: target.id, formKey: 'adverse_event' } });
  const [{ n: auditRows }] = await sequelize.query<{ n: number }>(`SELECT COUNT(*) AS n FROM audit_events WHERE entity_type = 'crf_record' AND entity_id IN (SELECT id FROM crf_records WHERE participant_id = ?)`, { type: QueryTypes.SELECT, replacements: [target.id] });
  if (save.non2xx || save.errors || save1.non2xx) failures.push(`form save: ${save.non2xx + save1.non2xx} non-2xx (${stale} stale), ${save.errors} errors`);

  // ---------------------------------------------------------------- (c) dashboard with 2,000 participants vs one SQL query
  console.log('[bench] adding 1,900 screened participants (2,000 in all) for the dashboard benchmark…');
  const outcomes = ['eligible', 'eligible', 'not_eligible', 'declined', 'pending'];
  const extra = Array.from({ length: 1900 }, (_, i) => ({
    studyId: study.id, siteId: sites[i % 2].id, screeningNumber: `B-${i}`, subjectCode: null, status: 'screening', createdBy: coord.user.id,
    screeningDate: '2026-11-01', age: 20 + (i % 50), sex: i % 2 ? 'F' : 'M', screeningOutcome: outcomes[i % outcomes.length], screeningReasons: i % 5 === 2 ? ['age'] : null, unblindedAt: null,
  }));
  const made = await Participant.bulkCreate(extra);
  const consentVersion = (await CrfRecord.findOne({ where: { studyId: study.id, formKey: 'consent' } }))!.formVersion;
  await CrfRecord.bulkCreate(
    made.filter((_, i) => i % 5 === 0).map((p) => ({
      studyId: study.id, siteId: p.siteId, participantId: p.id, formKey: 'consent', formVersion: consentVersion, visitKey: '', instance: 1, status: 'submitted' as const,
      data: example('consent'), derived: {}, review: [], lockVersion: 1, createdBy: coord.user.id, updatedBy: coord.user.id, submittedAt: new Date(), voidReason: null,
    })),
  );
  const total = await Participant.count({ where: { studyId: study.id } });
  const ic = await signedIn(inv.email, TEST_PASSWORD);
  const dash = await ic.get(`/api/studies/${study.code}/dashboard`);
  const sqlOnce = await ic.get(`/api/bench/recruitment-sql/${study.code}`);
  const pick = (r: { site: string; screened: number; eligible: number; consented: number; randomised: number }) => ({ site: r.site, screened: Number(r.screened), eligible: Number(r.eligible), consented: Number(r.consented), randomised: Number(r.randomised) });
  const same = JSON.stringify(dash.body.recruitment?.map(pick)) === JSON.stringify(sqlOnce.body.rows?.map(pick));
  if (dash.status !== 200 || sqlOnce.status !== 200) failures.push(`dashboard: ${dash.status}, SQL route: ${sqlOnce.status}`);
  if (!same) failures.push(`dashboard and SQL counts differ: ${JSON.stringify(dash.body.recruitment?.map(pick))} vs ${JSON.stringify(sqlOnce.body.rows?.map(pick))}`);
  const icookie = ic.cookieHeader();
  const sqlRun = await cannon('recruitment counts by one SQL query (same gate)', { url: `${BASE}/api/bench/recruitment-sql/${study.code}`, connections: 10, headers: { cookie: icookie } });
  const dashRun = await cannon(`dashboard API, ${total} participants`, { url: `${BASE}/api/studies/${study.code}/dashboard`, connections: 10, headers: { cookie: icookie } });
  const sql1 = await cannon('one-query SQL route, 1 connection', { url: `${BASE}/api/bench/recruitment-sql/${study.code}`, connections: 1, headers: { cookie: icookie } });
  const q1 = await questions();
  const dash1 = await cannon('dashboard API, 1 connection', { url: `${BASE}/api/studies/${study.code}/dashboard`, connections: 1, headers: { cookie: icookie } });
  const statementsPerDashboard = (await questions() - q1 - 1) / dash1.total;
  if (sqlRun.non2xx || dashRun.non2xx) failures.push(`dashboard runs: non-2xx ${dashRun.non2xx}, SQL runs: non-2xx ${sqlRun.non2xx}`);

  // ---------------------------------------------------------------- report
  const f = (x: number, d = 1) => (Number.isFinite(x) ? x.toFixed(d) : '—');
  console.log('\nrun                                                  req/s    mean ms   p50 ms   p95 ms   p99 ms   requests  non-2xx');
  for (const r of [bare, save, bare1, save1, sqlRun, dashRun, sql1, dash1]) console.log(`${r.name.padEnd(52)} ${f(r.rps).padStart(7)} ${f(r.mean).padStart(9)} ${f(r.p50, 0).padStart(8)} ${f(r.p95, 0).padStart(8)} ${f(r.p99, 0).padStart(8)} ${String(r.total).padStart(10)} ${String(r.non2xx).padStart(8)}`);
  const saveShare = save.rps / bare.rps;
  const dashRatio = dashRun.mean / sqlRun.mean;
  const mark = (okay: boolean) => (okay ? 'met' : 'MISSED');
  console.log('\ncheck                                                         measured           target     result');
  console.log(`(a) form save req/s as a share of the bare route                ${(saveShare * 100).toFixed(1).padStart(6)} %          ≥ 50 %     ${mark(saveShare >= 0.5)}`);
  console.log(`(a) form save p95 at 20 concurrent clients                      ${f(save.p95, 0).padStart(6)} ms         ≤ 150 ms   ${mark(save.p95 <= 150)}`);
  console.log(`(a) records saved / audit rows written                          ${saved} records, ${auditRows} audit rows, ${stale} stale answers`);
  console.log(`(b) 100 concurrent randomisations: answered 200                 ${String(ok).padStart(6)}             100        ${mark(ok === 100)}`);
  console.log(`(b) duplicate allocations (participant / slot / subject code)   ${dupParticipants} / ${dupSlots} / ${dupCodes}              0          ${mark(!dupParticipants && !dupSlots && !dupCodes)}`);
  console.log(`(b) gaps in the slot sequence (${byStratum.size} strata)                     ${String(gaps).padStart(6)}             0          ${mark(gaps === 0)}`);
  console.log(`(b) wall time for the 100 requests                              ${f(randMs, 0).padStart(6)} ms`);
  console.log(`(c) dashboard mean latency / one-query SQL route               ${f(dashRatio, 2).padStart(6)} ×          ≤ 2 ×      ${mark(dashRatio <= 2)}`);
  console.log(`(c) the same with 1 connection (no queueing)                 ${f(dash1.mean / sql1.mean, 2).padStart(6)} ×`);
  console.log(`(a) form save / bare route mean latency, 1 connection           ${f(save1.mean / bare1.mean, 2).padStart(6)} ×`);
  console.log(`(c) dashboard counts equal the SQL counts                       ${same ? 'yes' : 'NO'}`);
  console.log(`(a) database statements per form save (gate included)           ${f(statementsPerSave).padStart(6)}`);
  console.log(`(c) database statements per dashboard request (gate included)   ${f(statementsPerDashboard).padStart(6)}`);
  if (failures.length) {
    console.error(`\n[bench] correctness failures:\n  ${failures.join('\n  ')}`);
    process.exitCode = 1;
  }
  await sequelize.close();
}

main().catch(async (e) => {
  console.error(e);
  process.exitCode = 1;
  await sequelize.close().catch(() => undefined);
});
