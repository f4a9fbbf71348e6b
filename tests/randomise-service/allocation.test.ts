// Concealed randomisation end to end: activation with a commitment, prerequisites (409 with the reason,
// nothing written), 50 concurrent randomisations in one stratum, site scoping, uploads, blinding, unblinding.
import { describe, it, expect, beforeAll } from 'vitest';
import { Allocation, AllocationSlot, Participant, RandomisationSetup, Site, Study, Upload, sequelize } from '@/models';
import { activateRandomisation, randomiseParticipant } from '@/lib/allocation';
import { pinForm } from '@/lib/crf/definitions';
import { DEMO_STUDY } from '@/lib/studies/demo';
import { scheduleCommitment, verifyCommitment } from '@/lib/randomise';
import { decideEligibility, REPAIR_STRENGTH_MESSAGE } from '@/lib/screening/eligibility';
import { demoStudy, makeUser, siteOf, TEST_PASSWORD, uniq } from '../support/factories';
import { Client, DEMO, signedIn } from '../support/http';
import { count, rows } from '../support/db';
import { allMail, waitForMail } from '../support/mail';
import { ensureActivated, example, PDF, readyParticipant } from '../support/ready';

let study: Study;
let hhc: Site;
const ARM_WORDS = ['EPM', 'EAM', 'Early passive motion', 'Early active motion'];
const armHits = (text: string) => ARM_WORDS.filter((w) => text.includes(w));
const rand = (c: Client, site: string, id: number) => c.post(`/api/studies/TEMPO-FT/sites/${site}/participants/${id}/randomise`, { confirm: true });

beforeAll(async () => {
  study = await demoStudy();
  hhc = await siteOf(study.id, 'HHC');
  await ensureActivated(study);
});

describe('activation and concealment', () => {
  it('the data manager activates once; the commitment verifies against the stored schedule; no seed leaves the server', async () => {
    // A study of its own, so this test sees activation happen whatever ran before it.
    const own = await Study.create({ code: uniq('ACT').toUpperCase(), title: 'Activation check', config: DEMO_STUDY.config, status: 'recruiting' });
    for (const code of ['AAA', 'BBB']) await Site.create({ studyId: own.id, code, name: `Site ${code}`, timeZone: 'UTC', recruitmentTarget: 10 });
    const dmUser = await makeUser([{ role: 'data_manager', site: null, studyId: own.id }]);
    const coUser = await makeUser([{ role: 'coordinator', site: null, studyId: own.id }]);
    const dm = new Client();
    await dm.signIn(dmUser.email, TEST_PASSWORD);
    const coord = new Client();
    await coord.signIn(coUser.email, TEST_PASSWORD);
    const base = `/api/studies/${own.code}/randomisation`;
    expect((await coord.post(`${base}/activate`, {})).status).toBe(403);
    const r = await dm.post(`${base}/activate`, {});
    expect(r.status).toBe(200);
    expect(r.body.commitment).toMatch(/^[0-9a-f]{64}$/);
    expect((await dm.post(`${base}/activate`, {})).status).toBe(409);
    const setup = (await RandomisationSetup.findOne({ where: { studyId: own.id } }))!;
    const status = await dm.get(base);
    expect(status.body.commitment).toBe(setup.commitment);
    expect(JSON.stringify(status.body) + JSON.stringify(r.body)).not.toContain(setup.seed);
    const slots = await AllocationSlot.findAll({ where: { studyId: own.id }, order: [['stratum', 'ASC'], ['slot', 'ASC']] });
    expect(slots.length).toBe(2 * 2 * 200);
    const schedule = slots.map((s) => ({ stratum: s.stratum, slot: s.slot, arm: s.arm, block: s.block, blockSize: s.blockSize }));
    expect(scheduleCommitment({ algorithmVersion: setup.algorithmVersion, seed: setup.seed, schedule })).toBe(setup.commitment);
    // A tampered schedule fails verification.
    const tampered = schedule.map((e, i) => (i === 7 ? { ...e, arm: e.arm === 'EPM' ? 'EAM' : 'EPM' } : e));
    expect(verifyCommitment({ algorithmVersion: setup.algorithmVersion, seed: setup.seed, schedule: tampered, commitment: setup.commitment })).toBe(false);
    const [audit] = await rows<{ new_value: string }>(sequelize, "SELECT new_value FROM audit_events WHERE entity_type = 'randomisation' AND action = 'activate' AND study_id = ?", [own.id]);
    expect(JSON.parse(audit.new_value).commitment).toBe(setup.commitment);
    await expect(activateRandomisation({ study: own, actor: { userId: dmUser.user.id, role: 'data_manager' } })).rejects.toMatchObject({ code: 'conflict' });
  });

  it('randomising before activation answers 409', async () => {
    const own = await Study.create({ code: uniq('PRE').toUpperCase(), title: 'Not active', config: DEMO_STUDY.config, status: 'recruiting' });
    await expect(randomiseParticipant({ study: own, site: hhc, participantId: 1, actor: { userId: 1, role: 'coordinator' } })).rejects.toMatchObject({ code: 'conflict', message: expect.stringMatching(/not been activated/) });
  });
});

describe('randomising a participant', () => {
  it('randomises a ready participant, assigns the study ID and e-mails the therapists the allocation', async () => {
    const p = await readyParticipant(study, hhc);
    const c = await signedIn(DEMO.coordinatorHHC);
    const r = await rand(c, 'HHC', p.id);
    expect(r.status).toBe(200);
    expect(['EPM', 'EAM']).toContain(r.body.arm);
    expect(r.body.subjectCode).toMatch(/^TEMPO-HHC-\d{3}$/);
    const mail = await waitForMail('therapist.hhc@tempo-ft.example', (m) => m.subject.includes(r.body.subjectCode));
    expect(mail.text).toContain(r.body.arm);
    expect((await allMail()).filter((m) => m.to.includes('assessor.hhc@tempo-ft.example') && m.subject.includes(r.body.subjectCode))).toEqual([]);
    const again = await rand(c, 'HHC', p.id);
    expect(again.status).toBe(409);
    expect(again.body.error.message).toMatch(/already randomised/);
  });

  const blocked: { name: string; opts: Parameters<typeof readyParticipant>[2]; reason: RegExp }[] = [
    { name: 'ineligible (two-strand repair)', opts: { eligibility: { ...example('eligibility'), core_strands: 2, inc_core_suture: 'N', inc_core_suture_reason: 'two-strand core repair' } }, reason: /not eligible/ },
    { name: 'unconsented', opts: { skip: ['consent'] }, reason: /consent has not been recorded/ },
    { name: 'consent without the signed form', opts: { skip: ['upload'] }, reason: /signed consent form has not been uploaded/ },
    { name: 'no operation form', opts: { skip: ['operation'] }, reason: /operation form is not submitted/ },
  ];
  for (const b of blocked) {
    it(`${b.name} → 409 with the reason, nothing written`, async () => {
      const p = await readyParticipant(study, hhc, b.opts);
      const c = await signedIn(DEMO.coordinatorHHC);
      const before = [await count(sequelize, 'allocations'), await count(sequelize, 'audit_events'), await count(sequelize, 'allocation_slots', 'participant_id IS NOT NULL')];
      const r = await rand(c, 'HHC', p.id);
      expect(r.status).toBe(409);
      expect(r.body.error.message).toMatch(b.reason);
      expect(r.body.error.reasons.length).toBeGreaterThan(0);
      expect([await count(sequelize, 'allocations'), await count(sequelize, 'audit_events'), await count(sequelize, 'allocation_slots', 'participant_id IS NOT NULL')]).toEqual(before);
    });
  }

  it('the screening log records the server’s decision and reasons', async () => {
    const p = await readyParticipant(study, hhc, { eligibility: { ...example('eligibility'), core_strands: 2, inc_core_suture: 'N', inc_core_suture_reason: 'two-strand core repair' }, skip: ['consent', 'baseline', 'operation'] });
    const c = await signedIn(DEMO.coordinatorHHC);
    const log = await c.get('/api/studies/TEMPO-FT/sites/HHC/screening?outcome=not_eligible&pageSize=200');
    const row = log.body.rows.find((r: { id: number }) => r.id === p.id);
    expect(row.outcome).toBe('not_eligible');
    expect(row.reasons.join(' ')).toContain('4 strands or more');
    // Not eligible stays the reason: "declined" cannot be recorded over it (409, nothing changed).
    const refused = await c.post(`/api/studies/TEMPO-FT/sites/HHC/screening/${p.id}/outcome`, { outcome: 'declined', reason: 'was not offered the study' });
    expect(refused.status).toBe(409);
    expect(refused.body.error.message).toContain('did not meet the eligibility criteria');
    expect((await Participant.findByPk(p.id))!.screeningOutcome).toBe('not_eligible');
    const declined = await readyParticipant(study, hhc, { skip: ['eligibility', 'consent', 'baseline', 'operation'] });
    expect((await c.post(`/api/studies/TEMPO-FT/sites/HHC/screening/${declined.id}/outcome`, { outcome: 'declined', reason: 'prefers local therapy' })).status).toBe(200);
    const d = await c.get('/api/studies/TEMPO-FT/sites/HHC/screening?outcome=declined&pageSize=200');
    expect(d.body.rows.map((r: { id: number }) => r.id)).toContain(declined.id);
    expect((await c.get('/api/studies/TEMPO-FT/sites/HHC/screening?outcome=bogus')).status).toBe(400);
  });

  it('50 concurrent randomisations in one stratum take 50 distinct consecutive slots, each participant once', async () => {
    const kvh = await siteOf(study.id, 'KVH');
    const { user, email } = await makeUser([{ role: 'coordinator', site: 'KVH' }]);
    const ps = [];
    for (let i = 0; i < 50; i++) ps.push(await readyParticipant(study, kvh, { coordinatorId: user.id, fingers: 2 }));
    const c = new Client();
    await c.signIn(email, TEST_PASSWORD);
    const results = await Promise.all(ps.map((p) => rand(c, 'KVH', p.id)));
    expect(results.map((r) => r.status)).toEqual(Array(50).fill(200));
    const allocs = await Allocation.findAll({ where: { participantId: ps.map((p) => p.id) } });
    expect(allocs).toHaveLength(50);
    const slots = await AllocationSlot.findAll({ where: { id: allocs.map((a) => a.slotId) }, order: [['slot', 'ASC']] });
    expect(new Set(slots.map((s) => s.stratum))).toEqual(new Set(['site=KVH|fingers=2+']));
    expect(slots.map((s) => s.slot)).toEqual(Array.from({ length: 50 }, (_, i) => i + 1));
    expect(new Set(results.map((r) => r.body.subjectCode)).size).toBe(50);
    // Every allocation carries its slot's arm.
    for (const a of allocs) expect(a.arm).toBe(slots.find((s) => s.id === a.slotId)!.arm);
  });

  it('two studies with the same prefix and site code each give their first participant the same study ID', async () => {
    // Study IDs are unique within a study (participants_study_subject_code), not across the server.
    const prefix = uniq('TWIN').toUpperCase();
    const config = { ...DEMO_STUDY.config, randomisation: { ...DEMO_STUDY.config.randomisation, subjectPrefix: prefix } };
    const codes: string[] = [];
    for (const n of [1, 2]) {
      const own = await Study.create({ code: uniq(`TW${n}`).toUpperCase(), title: `Twin study ${n}`, config, status: 'recruiting' });
      const site = await Site.create({ studyId: own.id, code: 'AAA', name: 'Alder Clinic', timeZone: 'UTC', recruitmentTarget: 10 });
      for (const f of ['eligibility', 'consent', 'baseline', 'operation']) await pinForm(own.id, f, 1, { userId: null, role: 'system' });
      await ensureActivated(own);
      const { user } = await makeUser([{ role: 'coordinator', site: 'AAA', studyId: own.id }]);
      const p = await readyParticipant(own, site, { coordinatorId: user.id });
      const view = await randomiseParticipant({ study: own, site, participantId: p.id, actor: { userId: user.id, role: 'coordinator' } });
      codes.push(view.subjectCode);
    }
    expect(codes).toEqual([`${prefix}-AAA-001`, `${prefix}-AAA-001`]);
    // Within one study the index still refuses a second participant with the same study ID.
    const [first] = await rows<{ study_id: number; site_id: number }>(sequelize, 'SELECT study_id, site_id FROM participants WHERE subject_code = ? ORDER BY id LIMIT 1', [codes[0]]);
    await expect(
      sequelize.query('INSERT INTO participants (study_id, site_id, screening_number, subject_code, status, screening_outcome, created_at, updated_at) VALUES (?, ?, ?, ?, ?, ?, NOW(3), NOW(3))', {
        replacements: [first.study_id, first.site_id, uniq('DUP'), codes[0], 'randomised', 'eligible'],
      }),
    ).rejects.toMatchObject({ name: 'SequelizeUniqueConstraintError', parent: { message: expect.stringContaining('participants_study_subject_code') } });
  });
});

describe('site scoping and uploads', () => {
  it('a coordinator of another site gets 403 for this site’s participants, uploads and screening log', async () => {
    const p = await readyParticipant(study, hhc);
    const up = (await Upload.findOne({ where: { participantId: p.id } }))!;
    const mlb = await signedIn(DEMO.coordinatorMLB);
    for (const url of [`/api/studies/TEMPO-FT/sites/HHC/participants/${p.id}`, `/api/studies/TEMPO-FT/sites/HHC/uploads/${up.publicId}`, '/api/studies/TEMPO-FT/sites/HHC/screening', '/api/studies/TEMPO-FT/sites/HHC/participants']) {
      expect((await mlb.get(url)).status, url).toBe(403);
    }
    expect((await mlb.get(`/api/studies/TEMPO-FT/sites/MLB/participants/${p.id}`)).status).toBe(404);
    expect((await mlb.get(`/api/studies/TEMPO-FT/sites/MLB/uploads/${up.publicId}`)).status).toBe(404);
  });

  it('the same site’s coordinator downloads the identical file, and the download is logged; the assessor may not', async () => {
    const p = await readyParticipant(study, hhc);
    const up = (await Upload.findOne({ where: { participantId: p.id } }))!;
    expect(up.mime).toBe('application/pdf');
    const c = await signedIn(DEMO.coordinatorHHC);
    const res = await c.raw(`/api/studies/TEMPO-FT/sites/HHC/uploads/${up.publicId}`);
    expect(res.status).toBe(200);
    expect(Buffer.from(await res.arrayBuffer()).equals(PDF)).toBe(true);
    expect(res.headers.get('content-disposition')).toMatch(/attachment/);
    expect(await count(sequelize, 'access_log', "event = 'download' AND JSON_VALUE(detail, '$.upload') = ?", [up.publicId])).toBe(1);
    expect((await (await signedIn(DEMO.assessorHHC)).raw(`/api/studies/TEMPO-FT/sites/HHC/uploads/${up.publicId}`)).status).toBe(403);
    expect((await (await signedIn(DEMO.monitor)).raw(`/api/studies/TEMPO-FT/sites/HHC/uploads/${up.publicId}`)).status).toBe(200);
  });

  const badUploads: { name: string; body: Buffer; status: number; message: RegExp }[] = [
    { name: 'wrong type by content (text named as PDF)', body: Buffer.from('this is only text, not a PDF at all'), status: 415, message: /not a PDF, PNG or JPEG/ },
    { name: 'an executable', body: Buffer.concat([Buffer.from([0x4d, 0x5a, 0x90, 0x00]), Buffer.alloc(200)]), status: 415, message: /not a PDF, PNG or JPEG/ },
    { name: 'empty', body: Buffer.alloc(0), status: 400, message: /empty/ },
    { name: 'too large', body: Buffer.concat([PDF, Buffer.alloc(10 * 1024 * 1024)]), status: 413, message: /10 MB/ },
  ];
  for (const b of badUploads) {
    it(`bad upload: ${b.name} → ${b.status}, nothing stored`, async () => {
      const p = await readyParticipant(study, hhc, { skip: ['consent', 'baseline', 'operation', 'eligibility'] });
      const c = await signedIn(DEMO.coordinatorHHC);
      const before = await count(sequelize, 'uploads');
      const res = await c.raw(`/api/studies/TEMPO-FT/sites/HHC/participants/${p.id}/uploads`, { method: 'POST', headers: { 'content-type': 'application/pdf' }, body: new Uint8Array(b.body) });
      expect(res.status).toBe(b.status);
      expect(((await res.json()) as { error: { message: string } }).error.message).toMatch(b.message);
      expect(await count(sequelize, 'uploads')).toBe(before);
    });
  }

  it('PNG and JPEG are accepted by their bytes', async () => {
    const p = await readyParticipant(study, hhc, { skip: ['consent', 'baseline', 'operation', 'eligibility'] });
    const c = await signedIn(DEMO.coordinatorHHC);
    const png = Buffer.from('iVBORw0KGgoAAAANSUhEUgAAAAEAAAABCAYAAAAfFcSJAAAADUlEQVR42mP8z8BQDwAEhQGAhKmMIQAAAABJRU5ErkJggg==', 'base64');
    const jpg = Buffer.concat([Buffer.from([0xff, 0xd8, 0xff, 0xe0, 0x00, 0x10, 0x4a, 0x46, 0x49, 0x46, 0x00, 0x01]), Buffer.alloc(64), Buffer.from([0xff, 0xd9])]);
    for (const [bytes, mime] of [[png, 'image/png'], [jpg, 'image/jpeg']] as const) {
      const res = await c.raw(`/api/studies/TEMPO-FT/sites/HHC/participants/${p.id}/uploads`, { method: 'POST', headers: { 'content-type': 'application/octet-stream' }, body: new Uint8Array(bytes) });
      const body = (await res.json()) as { mime: string; sha256: string };
      expect(res.status).toBe(200);
      expect(body.mime).toBe(mime);
      expect(body.sha256).toMatch(/^[0-9a-f]{64}$/);
    }
  });
});

describe('blinding', () => {
  it('the assessor’s reachable routes and pages carry no arm code or label; the therapist’s do (control)', async () => {
    const p = await readyParticipant(study, hhc);
    const c = await signedIn(DEMO.coordinatorHHC);
    expect((await rand(c, 'HHC', p.id)).status).toBe(200);
    const pid = p.id;
    const apis = [
      '/api/me', '/api/studies/TEMPO-FT/sites', '/api/studies/TEMPO-FT/sites/HHC', '/api/studies/TEMPO-FT/sites/HHC/participants?pageSize=200',
      `/api/studies/TEMPO-FT/sites/HHC/participants/${pid}`, `/api/studies/TEMPO-FT/sites/HHC/participants/${pid}/audit?pageSize=200`,
      ...['eligibility', 'consent', 'baseline', 'operation', 'follow_up', 'adverse_event', 'protocol_deviation', 'end_of_participation', 'therapy_session'].map((f) => `/api/studies/TEMPO-FT/sites/HHC/participants/${pid}/forms/${f}`),
    ];
    const pages = ['/', '/studies/TEMPO-FT', '/studies/TEMPO-FT/sites/HHC', '/studies/TEMPO-FT/sites/HHC/participants', `/studies/TEMPO-FT/sites/HHC/participants/${pid}`, `/studies/TEMPO-FT/sites/HHC/participants/${pid}/audit`, `/studies/TEMPO-FT/sites/HHC/participants/${pid}/forms/follow_up`];
    const a = await signedIn(DEMO.assessorHHC);
    let reached = 0;
    for (const url of apis) {
      const r = await a.get(url);
      if (r.status === 200) reached++;
      expect(armHits(JSON.stringify(r.body)), url).toEqual([]);
    }
    for (const url of pages) {
      const r = await a.page(url);
      if (r.status === 200) reached++;
      expect(armHits(r.html), url).toEqual([]);
    }
    expect(reached).toBeGreaterThan(10);
    expect((await a.get(`/api/studies/TEMPO-FT/sites/HHC/participants/${pid}/forms/therapy_session`)).status).toBe(403);
    const assessorMail = (await allMail()).filter((m) => m.to.includes('assessor.hhc@tempo-ft.example'));
    for (const m of assessorMail) expect(armHits(m.subject + m.text)).toEqual([]);
    const t = await signedIn(DEMO.therapistHHC);
    const list = await t.get('/api/studies/TEMPO-FT/sites/HHC/participants?pageSize=200');
    expect(list.body.showsArm).toBe(true);
    expect(armHits(JSON.stringify(list.body)).length).toBeGreaterThan(0);
    const aList = await a.get('/api/studies/TEMPO-FT/sites/HHC/participants?pageSize=200');
    expect(aList.body.showsArm).toBe(false);
    expect(aList.body.rows.every((r: object) => !('arm' in r))).toBe(true);
  });

  it('emergency unblinding: investigator only, with a reason; registered, flagged, data manager e-mailed without the arm', async () => {
    const p = await readyParticipant(study, hhc);
    const c = await signedIn(DEMO.coordinatorHHC);
    const allocated = await rand(c, 'HHC', p.id);
    const url = `/api/studies/TEMPO-FT/sites/HHC/participants/${p.id}/unblind`;
    expect((await c.post(url, { reason: 'suspected rupture, surgeon asks' })).status).toBe(403);
    expect((await (await signedIn(DEMO.assessorHHC)).post(url, { reason: 'curious about this participant' })).status).toBe(403);
    const inv = await signedIn(DEMO.investigator);
    expect((await inv.post(url, { reason: 'short' })).status).toBe(400);
    const r = await inv.post(url, { reason: 'suspected rupture; the operating surgeon needs the programme' });
    expect(r.status).toBe(200);
    expect(r.body.arm).toBe(allocated.body.arm);
    const reg = await (await signedIn(DEMO.dataManager)).get('/api/studies/TEMPO-FT/unblinding');
    expect(reg.body.rows[0]).toMatchObject({ subjectCode: allocated.body.subjectCode, role: 'investigator' });
    expect(armHits(JSON.stringify(reg.body))).toEqual([]);
    const mail = await waitForMail('datamanager@tempo-ft.example', (m) => m.subject.includes(allocated.body.subjectCode));
    expect(armHits(mail.text)).toEqual([]);
    const list = await (await signedIn(DEMO.therapistHHC)).get('/api/studies/TEMPO-FT/sites/HHC/participants?pageSize=200');
    expect(list.body.rows.find((x: { id: number }) => x.id === p.id).unblinded).toBe(true);
  });
});

describe('eligibility: repair strength (common practice thresholds)', () => {
  // Rule of thumb, common practice: a 2-strand repair with epitendinous suture falls from about 2500 g to about 1700 g
  // by three weeks, below the up to about 4000 g an active composite fist can load; a 4-strand repair with epitendinous
  // suture keeps about 2800 g. Passive flexion loads about 2–4 N and a strong composite grip about 70 N.
  const ok = example('eligibility');
  it('refuses a two-strand repair with a message that says why', () => {
    const d = decideEligibility({ ...ok, core_strands: 2 });
    expect(d.eligible).toBe(false);
    expect(d.reasons).toContain(REPAIR_STRENGTH_MESSAGE);
    expect(REPAIR_STRENGTH_MESSAGE).toMatch(/4 strands or more with an epitendinous suture/);
    expect(REPAIR_STRENGTH_MESSAGE).toMatch(/treating team decides/);
  });
  it('refuses four strands without an epitendinous suture', () => {
    expect(decideEligibility({ ...ok, core_strands: 4, epitendinous_suture: 'N' }).eligible).toBe(false);
  });
  it('accepts a four-strand repair with an epitendinous suture', () => {
    expect(decideEligibility({ ...ok, core_strands: 4, epitendinous_suture: 'Y' })).toEqual({ eligible: true, reasons: [] });
    expect(decideEligibility({ ...ok, core_strands: 6, epitendinous_suture: 'Y' }).eligible).toBe(true);
  });
  it('each unmet inclusion and each exclusion gives its own reason', () => {
    const d = decideEligibility({ ...ok, inc_age: 'N', inc_age_reason: 'aged 72', exc_fracture: 'Y' });
    expect(d.reasons).toEqual(['Not aged 16 to 70 years: aged 72', 'Fracture in the injured hand']);
  });
});
