// Database lock on a study of its own: the readiness check lists each kind of blocker for a hand-built scenario;
// a soft lock refuses new entry but lets a query be answered and closed; a hard lock needs a soft lock first and
// acknowledged blockers; unlocking needs a second data manager; a site lock leaves the other sites writable; a lock
// that lands while a write is in flight waits for it and wins afterwards.
import { describe, it, expect, beforeAll } from 'vitest';
import { CrfRecord, LockEvent, Participant, SaeReport, sequelize, type Site, type Study } from '@/models';
import { saveRecord } from '@/lib/crf/records';
import { answerQuery, openQuery } from '@/lib/monitoring/queries';
import { signCasebook, verifyItem } from '@/lib/monitoring/verification';
import { assertWritable, isLockedForAnalysis, lockState, readinessCheck, setLock } from '@/lib/lock';
import { TEST_PASSWORD, uniq } from '../support/factories';
import { count, privDb } from '../support/db';
import { example, readyParticipant } from '../support/ready';
import { Client } from '../support/http';
import { client, lockStudy, randomised } from './helpers';

let study: Study;
let sites: Record<'AAA' | 'BBB' | 'CCC', Site>;
let users: Awaited<ReturnType<typeof lockStudy>>['users'];
let p1: Participant;
let p2: Participant;
let openQ: number;
let answeredQ: number;
const api = () => `/api/studies/${study.code}`;

beforeAll(async () => {
  ({ study, sites, users } = await lockStudy('LOCK'));
  const coord = users.coordinator.user.id;
  const mon = { userId: users.monitor.user.id, role: 'monitor' as const };
  // P1 at AAA: randomised, one open and one answered query, a serious adverse event, nothing verified or signed.
  p1 = await randomised(study, sites.AAA, coord);
  const base1 = (await CrfRecord.findOne({ where: { participantId: p1.id, formKey: 'baseline' } }))!;
  openQ = (await openQuery({ studyId: study.id, siteId: sites.AAA.id, recordId: base1.id, itemPath: '/AGE', message: 'Please check the age against the notes.', actor: mon })).id;
  answeredQ = (await openQuery({ studyId: study.id, siteId: sites.AAA.id, recordId: base1.id, itemPath: '/SEX', message: 'Please check the sex against the notes.', actor: mon })).id;
  await answerQuery({ studyId: study.id, siteId: sites.AAA.id, queryId: answeredQ, text: 'Checked: as entered.', actor: { userId: coord, role: 'coordinator' } });
  await saveRecord({ study, siteId: sites.AAA.id, participantId: p1.id, formKey: 'adverse_event', data: example('adverse_event', 'valid-2'), intent: 'submit', baseVersion: null, actor: { userId: coord, roles: ['coordinator'] }, today: '2026-12-02' });
  // P2 at AAA: randomised, baseline verified as a whole form, casebook signed (last, so nothing invalidates it).
  p2 = await randomised(study, sites.AAA, coord);
  const base2 = (await CrfRecord.findOne({ where: { participantId: p2.id, formKey: 'baseline' } }))!;
  await verifyItem({ studyId: study.id, siteId: sites.AAA.id, recordId: base2.id, itemPath: '', actor: mon });
  await signCasebook({ studyId: study.id, siteId: sites.AAA.id, participantId: p2.id, password: TEST_PASSWORD, actor: { userId: users.investigator.user.id, role: 'investigator' } });
  // P3 at AAA: screened with a baseline, not randomised: none of the randomised-only checks count it.
  await readyParticipant(study, sites.AAA, { coordinatorId: coord, skip: ['consent', 'operation'] });
});

describe('readiness check', () => {
  it('lists each kind of blocker with counts and participant codes (hand-built scenario at site AAA)', async () => {
    const r = await readinessCheck(study.id, sites.AAA.id);
    const by = Object.fromEntries(r.checks.map((c) => [c.kind, c]));
    const c1 = p1.subjectCode!;
    const c2 = p2.subjectCode!;
    expect(r.clean).toBe(false);
    expect(r.sdvForms.sort()).toEqual(['baseline', 'follow_up', 'therapy_session']);
    expect(by.open_queries).toMatchObject({ count: 2, participants: [c1], detail: { open: 1, answered: 1 } });
    expect(by.unsigned_casebooks).toMatchObject({ count: 1, participants: [c1] });
    expect(by.unverified_forms).toMatchObject({ count: 1, participants: [c1], detail: { baseline: 1 } });
    expect(by.sae_without_follow_up).toMatchObject({ count: 1, participants: [c1] });
    // Seven required visits in the schedule of assessments: the baseline is done on the day of randomisation (its
    // form was submitted before), the other six are not done yet, for each of the two randomised participants.
    expect(by.missing_visits).toMatchObject({ count: 12, participants: [c1, c2].sort() });
    expect(by.missing_visits.detail).toMatchObject({ week12: 2, week26: 2 });
    expect(by.missing_visits.detail?.baseline).toBeUndefined();
    expect(r.blockers.map((b) => b.kind)).toEqual(['open_queries', 'unsigned_casebooks', 'unverified_forms', 'sae_without_follow_up', 'missing_visits']);

    // A follow-up recorded on the SAE removes that blocker; the other site has none of this site's blockers.
    await SaeReport.update({ followedUpAt: new Date() }, { where: { participantId: p1.id } });
    expect((await readinessCheck(study.id, sites.AAA.id)).checks.find((c) => c.kind === 'sae_without_follow_up')!.count).toBe(0);
    expect((await readinessCheck(study.id, sites.BBB.id)).clean).toBe(true);
  });

  it('the readiness route answers the same for the data manager and admin; other roles are refused', async () => {
    const dm = await client(users.dm1.email);
    const r = await dm.get(`${api()}/lock/readiness?site=AAA`);
    expect(r.status).toBe(200);
    expect(r.body.site).toBe('AAA');
    expect(r.body.checks).toEqual((await readinessCheck(study.id, sites.AAA.id)).checks);
    expect((await (await client(users.admin.email)).get(`${api()}/lock/readiness`)).status).toBe(200);
    expect((await (await client(users.monitor.email)).get(`${api()}/lock/readiness`)).status).toBe(403);
    expect((await (await client(users.coordinator.email)).get(`${api()}/lock`)).status).toBe(403);
    expect((await dm.get(`${api()}/lock/readiness?site=ZZZ`)).status).toBe(404);
  });
});

describe('lock routes: sign-in and bodies', () => {
  it('answer 401 without a session, 403 to other roles, and refuse unknown fields and bad levels', async () => {
    const anon = new Client();
    for (const [m, u] of [['GET', '/lock'], ['GET', '/lock/readiness'], ['POST', '/lock'], ['POST', '/lock/unlock-requests'], ['POST', '/lock/unlock-requests/1/approve']] as const) {
      expect((await anon.json(m, `${api()}${u}`, m === 'POST' ? {} : undefined)).status, `${m} ${u}`).toBe(401);
    }
    const mon = await client(users.monitor.email);
    expect((await mon.post(`${api()}/lock`, { level: 'soft' })).status).toBe(403);
    expect((await mon.post(`${api()}/lock/unlock-requests`, { reason: 'not mine to ask' })).status).toBe(403);
    const dm = await client(users.dm1.email);
    const bad = await dm.post(`${api()}/lock`, { level: 'frozen', siteCode: 'AAA', extra: 1 });
    expect(bad.status).toBe(400);
    expect(Object.keys(bad.body.error.fields).sort()).toEqual(['extra', 'level']);
    expect((await dm.json('POST', `${api()}/lock`, 'level=soft', { 'content-type': 'text/plain' })).status).toBe(415);
    expect((await dm.post(`${api()}/lock`, { level: 'soft', siteCode: 'ZZZ' })).status).toBe(404);
    expect((await dm.post(`${api()}/lock/unlock-requests/abc/approve`, {})).status).toBe(404);
    expect((await lockState(study.id)).level).toBe('open');
  });
});

describe('soft lock of one site', () => {
  it('refuses new entry at AAA (423 locked, naming the site and the time) while BBB stays writable', async () => {
    const dm = await client(users.dm1.email);
    const before = await count(sequelize, 'audit_events', "entity_type = 'site_lock'");
    const l = await dm.post(`${api()}/lock`, { level: 'soft', siteCode: 'AAA', reason: 'final cleaning at Alder' });
    expect(l.status).toBe(200);
    expect(l.body.state).toMatchObject({ level: 'soft', scope: 'site' });
    expect(await count(sequelize, 'audit_events', "entity_type = 'site_lock' AND action = 'soft_lock' AND entity_id = ?", [String(sites.AAA.id)])).toBe(1);
    expect(await count(sequelize, 'audit_events', "entity_type = 'site_lock'")).toBe(before + 1);

    const coord = await client(users.coordinator.email);
    const s = await coord.post(`${api()}/sites/AAA/screening`, { screeningNumber: uniq('S'), screeningDate: '2026-12-01', age: 30, sex: 'F' });
    expect(s.status).toBe(423);
    expect(s.body.error.code).toBe('locked');
    expect(s.body.error.message).toMatch(/^Site AAA of LOCK-[A-F0-9]+ is soft-locked since \d{4}-\d\d-\d\d \d\d:\d\d UTC: no new data entry/);
    expect(s.body.error.lock).toMatchObject({ level: 'soft', scope: 'site', site: 'AAA' });
    const put = await coord.json('PUT', `${api()}/sites/AAA/participants/${p1.id}/forms/adverse_event?instance=2`, { data: example('adverse_event', 'valid-1'), intent: 'submit', baseVersion: null });
    expect(put.status).toBe(423);
    // The monitor may not open a new query or re-open one during a soft lock.
    const mon = await client(users.monitor.email);
    const rec = (await CrfRecord.findOne({ where: { participantId: p1.id, formKey: 'baseline' } }))!;
    expect((await mon.post(`${api()}/sites/AAA/queries`, { recordId: rec.id, itemPath: '/AGE', message: 'Another look, please.' })).status).toBe(423);
    expect((await mon.post(`${api()}/sites/AAA/participants/${p1.id}/verify`, { recordId: rec.id, itemPath: '' })).status).toBe(423);

    // BBB is not locked.
    const b = await coord.post(`${api()}/sites/BBB/screening`, { screeningNumber: uniq('S'), screeningDate: '2026-12-01', age: 30, sex: 'F' });
    expect(b.status).toBe(200);
    expect((await lockState(study.id, sites.BBB.id)).level).toBe('open');
  });

  it('lets the open query be answered and the answered one be closed; re-opening is refused', async () => {
    const coord = await client(users.coordinator.email);
    const a = await coord.post(`${api()}/sites/AAA/queries/${openQ}/answer`, { text: 'Checked the notes: the age is right.' });
    expect(a.status).toBe(200);
    expect(a.body.state).toBe('answered');
    const mon = await client(users.monitor.email);
    expect((await mon.post(`${api()}/sites/AAA/queries/${answeredQ}/reopen`, { text: 'Not convinced.' })).status).toBe(423);
    for (const q of [openQ, answeredQ]) {
      const c = await mon.post(`${api()}/sites/AAA/queries/${q}/close`, { text: 'Accepted.' });
      expect(c.status).toBe(200);
      expect(c.body.state).toBe('closed');
    }
    expect((await readinessCheck(study.id, sites.AAA.id)).checks.find((c) => c.kind === 'open_queries')!.count).toBe(0);
  });
});

describe('hard lock', () => {
  it('needs a soft lock first', async () => {
    const r = await (await client(users.dm1.email)).post(`${api()}/lock`, { level: 'hard', siteCode: 'BBB' });
    expect(r.status).toBe(409);
    expect(r.body.error.message).toMatch(/Soft-lock the site BBB/);
  });

  it('is refused while blockers stand, unless they are acknowledged with override and a reason (kept in the history)', async () => {
    const dm = await client(users.dm1.email);
    const r = await dm.post(`${api()}/lock`, { level: 'hard', siteCode: 'AAA' });
    expect(r.status).toBe(409);
    expect(r.body.error.blockers.map((b: { kind: string }) => b.kind)).toEqual(['unsigned_casebooks', 'unverified_forms', 'missing_visits']);
    const noReason = await dm.post(`${api()}/lock`, { level: 'hard', siteCode: 'AAA', override: true });
    expect(noReason.status).toBe(400);
    expect(noReason.body.error.fields.reason).toBeTruthy();
    expect((await lockState(study.id, sites.AAA.id)).level).toBe('soft');
    const ok = await dm.post(`${api()}/lock`, { level: 'hard', siteCode: 'AAA', override: true, reason: 'follow-up at Alder ended early by the steering committee' });
    expect(ok.status).toBe(200);
    expect(ok.body.state.level).toBe('hard');
    const ev = (await LockEvent.findByPk(ok.body.eventId))!;
    expect(ev).toMatchObject({ action: 'hard_lock', fromLevel: 'soft', toLevel: 'hard', overridden: true });
    expect((ev.blockers as { kind: string }[]).map((b) => b.kind)).toContain('missing_visits');
    expect(await count(sequelize, 'audit_events', "entity_type = 'site_lock' AND action = 'hard_lock' AND reason LIKE 'override:%'")).toBe(1);
  });

  it('refuses even a query answer at AAA, and the lock history cannot be rewritten by the application user', async () => {
    const coord = await client(users.coordinator.email);
    const r = await coord.post(`${api()}/sites/AAA/queries/${openQ}/answer`, { text: 'one more note' });
    expect(r.status).toBe(423);
    expect(r.body.error.message).toMatch(/Site AAA of .* is hard-locked since .*: no changes are accepted/);
    await expect(sequelize.query('UPDATE lock_events SET reason = ? WHERE study_id = ?', { replacements: ['rewritten', study.id] })).rejects.toThrow(/command denied/i);
    await expect(sequelize.query('DELETE FROM lock_events WHERE study_id = ?', { replacements: [study.id] })).rejects.toThrow(/command denied/i);
  });

  it('admin may read the lock page data but not lock', async () => {
    const admin = await client(users.admin.email);
    const g = await admin.get(`${api()}/lock`);
    expect(g.status).toBe(200);
    expect(g.body.sites.find((s: { code: string }) => s.code === 'AAA')).toMatchObject({ level: 'hard', scope: 'site', own: 'hard' });
    expect(g.body.history[0]).toMatchObject({ action: 'hard_lock', site: 'AAA', overridden: true });
    expect((await admin.post(`${api()}/lock`, { level: 'soft', siteCode: 'BBB' })).status).toBe(403);
  });
});

describe('unlock', () => {
  it('one data manager asks, the same one is refused (403), a second one approves: hard → soft, audited', async () => {
    const dm1 = await client(users.dm1.email);
    const dm2 = await client(users.dm2.email);
    expect((await dm1.post(`${api()}/lock/unlock-requests`, { siteCode: 'AAA' })).status).toBe(400);
    const req = await dm1.post(`${api()}/lock/unlock-requests`, { siteCode: 'AAA', reason: 'a late source correction at Alder' });
    expect(req.status).toBe(200);
    expect(req.body).toMatchObject({ site: 'AAA', fromLevel: 'hard', toLevel: 'soft', status: 'pending' });
    expect((await dm1.post(`${api()}/lock/unlock-requests`, { siteCode: 'AAA', reason: 'asking twice' })).status).toBe(409);
    const self = await dm1.post(`${api()}/lock/unlock-requests/${req.body.id}/approve`, {});
    expect(self.status).toBe(403);
    expect((await lockState(study.id, sites.AAA.id)).level).toBe('hard');
    const ok = await dm2.post(`${api()}/lock/unlock-requests/${req.body.id}/approve`, {});
    expect(ok.status).toBe(200);
    expect(ok.body.request).toMatchObject({ status: 'approved', decidedBy: users.dm2.user.name, requestedBy: users.dm1.user.name });
    expect(ok.body.state).toMatchObject({ level: 'soft', scope: 'site' });
    expect((await dm2.post(`${api()}/lock/unlock-requests/${req.body.id}/approve`, {})).status).toBe(409);
    expect(await count(sequelize, 'audit_events', "entity_type = 'unlock_request' AND entity_id = ? AND action IN ('request', 'approve')", [String(req.body.id)])).toBe(2);
    expect(await count(sequelize, 'audit_events', "entity_type = 'site_lock' AND action = 'unlock' AND actor_user_id = ?", [users.dm2.user.id])).toBe(1);
    const hist = (await dm1.get(`${api()}/lock`)).body.history.map((e: { action: string }) => e.action);
    expect(hist.slice(0, 4)).toEqual(['unlock', 'unlock_request', 'hard_lock', 'soft_lock']);
    // Soft again: answering is allowed once more, entry still is not; a second round takes AAA back to open.
    expect((await (await client(users.coordinator.email)).post(`${api()}/sites/AAA/screening`, { screeningNumber: uniq('S'), screeningDate: '2026-12-01', age: 30, sex: 'F' })).status).toBe(423);
    const r2 = await dm2.post(`${api()}/lock/unlock-requests`, { siteCode: 'AAA', reason: 'reopen Alder for the correction' });
    expect((await dm1.post(`${api()}/lock/unlock-requests/${r2.body.id}/approve`, {})).body.state.level).toBe('open');
    expect((await (await client(users.coordinator.email)).post(`${api()}/sites/AAA/screening`, { screeningNumber: uniq('S'), screeningDate: '2026-12-01', age: 30, sex: 'F' })).status).toBe(200);
  });
});

describe('study-level lock', () => {
  it('covers every site (the stricter lock wins) and marks the study locked for analysis only when hard', async () => {
    expect(await isLockedForAnalysis(study.id)).toBe(false);
    const dm1 = { userId: users.dm1.user.id, role: 'data_manager' as const };
    await setLock({ studyId: study.id, siteId: sites.CCC.id, level: 'soft', actor: dm1 });
    await setLock({ studyId: study.id, siteId: null, level: 'soft', actor: dm1 });
    expect(await lockState(study.id, sites.BBB.id)).toMatchObject({ level: 'soft', scope: 'study' });
    expect((await (await client(users.coordinator.email)).post(`${api()}/sites/BBB/screening`, { screeningNumber: uniq('S'), screeningDate: '2026-12-01', age: 30, sex: 'F' })).body.error.message).toMatch(/^Study LOCK-[A-F0-9]+ is soft-locked/);
    expect(await isLockedForAnalysis(study.id)).toBe(false);
    // BBB has no lock of its own to lower: the study's lock decides there.
    const u = await (await client(users.dm1.email)).post(`${api()}/lock/unlock-requests`, { siteCode: 'BBB', reason: 'nothing of its own to unlock' });
    expect(u.status).toBe(409);
    expect(u.body.error.message).toMatch(/locked by the study lock/);
    // A site can be hard-locked under a soft study lock; the study lock then no longer decides there.
    await setLock({ studyId: study.id, siteId: sites.CCC.id, level: 'hard', override: true, reason: 'Cedar closed', actor: dm1 });
    expect(await lockState(study.id, sites.CCC.id)).toMatchObject({ level: 'hard', scope: 'site' });
    await setLock({ studyId: study.id, siteId: null, level: 'hard', override: true, reason: 'end of study', actor: dm1 });
    expect(await isLockedForAnalysis(study.id)).toBe(true);
    expect(await lockState(study.id, sites.AAA.id)).toMatchObject({ level: 'hard', scope: 'study', site: { level: 'open' } });
    await expect(setLock({ studyId: study.id, siteId: sites.AAA.id, level: 'soft', actor: dm1 })).rejects.toMatchObject({ code: 'conflict' });
    await expect(setLock({ studyId: study.id, siteId: null, level: 'soft', actor: { userId: users.monitor.user.id, role: 'monitor' } })).rejects.toMatchObject({ code: 'forbidden' });
  });
});

describe('a lock landing mid-request', () => {
  it('waits for a write that already checked, then wins: a write starting after it is refused', async () => {
    const other = await lockStudy('LOCKR');
    const dm = { userId: other.users.dm1.user.id, role: 'data_manager' as const };
    let release!: () => void;
    const held = new Promise<void>((r) => (release = r));
    let checked!: () => void;
    const didCheck = new Promise<void>((r) => (checked = r));
    const write = sequelize.transaction(async (t) => {
      await assertWritable(other.study.id, other.sites.AAA.id, 'entry', t);
      checked();
      await held;
      return 'written';
    });
    await didCheck;
    let lockDone = false;
    const lock = setLock({ studyId: other.study.id, siteId: other.sites.AAA.id, level: 'soft', actor: dm }).then((r) => ((lockDone = true), r));
    await new Promise((r) => setTimeout(r, 400));
    expect(lockDone).toBe(false);
    release();
    expect(await write).toBe('written');
    expect((await lock).state.level).toBe('soft');
    await expect(sequelize.transaction((t) => assertWritable(other.study.id, other.sites.AAA.id, 'entry', t))).rejects.toMatchObject({ code: 'locked' });
    await expect(sequelize.transaction((t) => assertWritable(other.study.id, other.sites.AAA.id, 'query', t))).resolves.toBeUndefined();
    // The privileged connection sees the one event; nothing else was written for this study's lock.
    expect(await count(privDb(), 'lock_events', 'study_id = ?', [other.study.id])).toBe(1);
  });
});
