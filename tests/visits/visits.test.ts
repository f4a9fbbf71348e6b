// Visits from day 0 (the repair), worklists, follow-up scores derived on the server and audited as "derived",
// automatic protocol deviations for out-of-window visits, and idempotent reminders.
import { describe, it, expect, beforeAll } from 'vitest';
import { CrfRecord, Participant, ReminderLog, Visit, sequelize } from '@/models';
import { randomiseParticipant } from '@/lib/allocation';
import { saveRecord } from '@/lib/crf/records';
import { runReminders, dueReminders } from '@/lib/reminders';
import { totalActiveMotion, tamPercent, tamGrade, quickDash } from '@/lib/scoring';
import { demoStudy, siteOf, makeUser, TEST_PASSWORD } from '../support/factories';
import { Client, DEMO, signedIn } from '../support/http';
import { rows } from '../support/db';
import { todayIn } from '@/lib/dates';
import { allMail } from '../support/mail';
import { coordinatorOf, ensureActivated, example, readyParticipant } from '../support/ready';
import { User, type Site, type Study } from '@/models';

let study: Study;
let hhc: Site;
let assessorId: number;
const TODAY = '2026-12-02';
const ARM_WORDS = ['EPM', 'EAM', 'Early passive motion', 'Early active motion'];

/** A randomised participant whose repair was on `repair` (injury the day before), one finger: right middle. */
async function randomisedWithRepair(repair: string, site = hhc) {
  const injury = new Date(Date.parse(`${repair}T00:00:00Z`) - 86400000).toISOString().slice(0, 10);
  const p = await readyParticipant(study, site, { skip: ['operation'] });
  const coord = await coordinatorOf(site.code);
  await saveRecord({ study, siteId: site.id, participantId: p.id, formKey: 'operation', data: { ...example('operation'), INJDAT: injury, REPDAT: repair }, intent: 'submit', baseVersion: null, actor: { userId: coord.id, roles: ['coordinator'] }, today: TODAY });
  const a = await randomiseParticipant({ study, site, participantId: p.id, actor: { userId: coord.id, role: 'coordinator' } });
  return { ...p, subjectCode: a.subjectCode };
}

const followUp = (visitDate: string, over: Record<string, unknown> = {}) => ({ ...example('follow_up'), VISDAT: visitDate, ...over });
const saveFollowUp = (pid: number, visitKey: string, data: Record<string, unknown>, intent: 'draft' | 'submit', baseVersion: number | null, reason?: { code: 'transcription_error' }) =>
  saveRecord({ study, siteId: hhc.id, participantId: pid, formKey: 'follow_up', visitKey, data, intent, baseVersion, reason, actor: { userId: assessorId, roles: ['assessor'] }, today: TODAY });

beforeAll(async () => {
  study = await demoStudy();
  hhc = await siteOf(study.id, 'HHC');
  await ensureActivated(study);
  assessorId = (await User.findOne({ where: { email: DEMO.assessorHHC } }))!.id;
});

describe('visits from day 0', () => {
  it('randomisation creates the schedule with windows from the repair date, across a leap day', async () => {
    // Repair 2028-02-20: week 2 target 2028-03-05 (29 February counted), window ±3 days (common practice example, VW-E1 shape).
    const p = await randomisedWithRepair('2026-10-04');
    const vs = await Visit.findAll({ where: { participantId: p.id }, order: [['target', 'ASC']] });
    expect(vs.map((v) => [v.visitKey, v.target, v.earliest, v.latest])).toEqual([
      ['baseline', '2026-10-04', '2026-10-04', '2026-10-07'],
      ['therapy_start', '2026-10-07', '2026-10-05', '2026-10-09'],
      ['week2', '2026-10-18', '2026-10-15', '2026-10-21'],
      ['week4', '2026-11-01', '2026-10-29', '2026-11-04'],
      ['week6', '2026-11-15', '2026-11-10', '2026-11-20'],
      ['week12', '2026-12-27', '2026-12-20', '2027-01-03'],
      ['week26', '2027-04-04', '2027-03-21', '2027-04-18'],
    ]);
    expect(vs.filter((v) => v.blinded).map((v) => v.visitKey)).toEqual(['week6', 'week12', 'week26']);
    // The baseline form was submitted before randomisation (which requires it): the baseline visit is done on the day
    // of randomisation at the site, audited; every other visit is still to do.
    expect(vs.map((v) => v.completedOn)).toEqual([todayIn(hhc.timeZone), null, null, null, null, null, null]);
    const [audit] = await rows<{ new_value: string; reason: string; actor_role: string }>(sequelize, "SELECT new_value, reason, actor_role FROM audit_events WHERE entity_type = 'visit' AND entity_id = ? AND item_path = '/completedOn'", [String(vs[0].id)]);
    expect(audit).toMatchObject({ reason: 'baseline submitted before randomisation', actor_role: 'system' });
    expect(JSON.parse(audit.new_value)).toBe(todayIn(hhc.timeZone));
  });
});

describe('follow-up with derived scores', () => {
  it('computes TAM, % of the other hand, grade, QuickDASH and grip ratio on the server; client values are ignored', async () => {
    const p = await randomisedWithRepair('2026-09-09');
    const sent = followUp('2026-12-01', { derived_scores: { quickdash_score: 0, tam_by_finger: [], grip_ratio_pct: 100 } });
    const r = await saveFollowUp(p.id, 'week12', sent, 'submit', null);
    const g = example('follow_up').goniometry as Record<string, number>[];
    const tam = (x: Record<string, number>) => totalActiveMotion({ mcpFlexion: x.mcp_flexion, pipFlexion: x.pip_flexion, dipFlexion: x.dip_flexion, mcpExtensionDeficit: x.mcp_ext_deficit, pipExtensionDeficit: x.pip_ext_deficit, dipExtensionDeficit: x.dip_ext_deficit });
    // Right middle: 80+75+40 − (0+15+10) = 170°; left middle: 90+100+70 − 0 (hyperextension counts 0) = 260°.
    expect(tam(g[0])).toBe(170);
    expect(tam(g[1])).toBe(260);
    const scores = r.derived.derived_scores as { tam_by_finger: { tam: number; tam_pct_contralateral: number; grade: string }[]; quickdash_score: number; grip_ratio_pct: number };
    expect(scores.tam_by_finger).toEqual([{ hand: 'right', finger: 'middle', tam: 170, tam_pct_contralateral: 65.38, grade: 'fair' }]);
    expect(tamGrade(tamPercent(170, 260))).toBe('fair');
    expect(scores.quickdash_score).toBeCloseTo(quickDash(example('follow_up').quickdash as number[])!, 2);
    // Grip: mean(22.5, 24, 23) / mean(41, 43.5, 42) = 23.1667 / 42.1667 = 54.94 %.
    expect(scores.grip_ratio_pct).toBeCloseTo(54.94, 2);
  });

  it('a change to a raw item re-derives the scores and audits them with the reason "derived"', async () => {
    const p = await randomisedWithRepair('2026-09-10');
    const r1 = await saveFollowUp(p.id, 'week12', followUp('2026-12-01'), 'submit', null);
    const g = structuredClone(example('follow_up').goniometry) as Record<string, number>[];
    g[0].pip_flexion = 95;
    const r2 = await saveFollowUp(p.id, 'week12', followUp('2026-12-01', { goniometry: g }), 'submit', r1.lockVersion, { code: 'transcription_error' });
    const audit = await rows<{ item_path: string; old_value: string; new_value: string; reason: string }>(
      sequelize,
      "SELECT item_path, old_value, new_value, reason FROM audit_events WHERE entity_type = 'crf_record' AND entity_id = ? AND action = 'item' ORDER BY id DESC LIMIT 3",
      [String(r2.id)],
    );
    expect(audit.find((a) => a.item_path === '/goniometry/0/pip_flexion')).toMatchObject({ old_value: '75', new_value: '95', reason: 'Transcription error' });
    expect(audit.find((a) => a.item_path === '/derived_scores/tam_by_finger/0/tam')).toMatchObject({ old_value: '170', new_value: '190', reason: 'derived' });
  });

  it('scores that cannot be calculated are refused with 400, even in a draft', async () => {
    const p = await randomisedWithRepair('2026-09-11');
    const g = structuredClone(example('follow_up').goniometry) as Record<string, number>[];
    g[0].pip_ext_deficit = 110;
    await expect(saveFollowUp(p.id, 'week12', followUp('2026-12-01', { goniometry: g }), 'draft', null)).rejects.toMatchObject({ code: 'invalid_input', status: 400 });
    expect(await CrfRecord.count({ where: { participantId: p.id, formKey: 'follow_up' } })).toBe(0);
  });

  it('a visit done outside its window is completed and creates a protocol deviation automatically', async () => {
    const p = await randomisedWithRepair('2026-09-12');
    // Week 6 window: 2026-10-19 to 2026-10-29; done on 2026-11-02.
    await saveFollowUp(p.id, 'week6', followUp('2026-11-02'), 'submit', null);
    const v = (await Visit.findOne({ where: { participantId: p.id, visitKey: 'week6' } }))!;
    expect(v.completedOn).toBe('2026-11-02');
    const dev = await CrfRecord.findOne({ where: { participantId: p.id, formKey: 'protocol_deviation' } });
    expect(dev!.data).toMatchObject({ DVCAT: 'visit_out_of_window', reveals_allocation: 'N' });
    expect(String(dev!.data.DVTERM)).toContain('2026-10-19 to 2026-10-29');
    // Inside the window: no deviation.
    const q = await randomisedWithRepair('2026-09-13');
    await saveFollowUp(q.id, 'week6', followUp('2026-10-25'), 'submit', null);
    expect(await CrfRecord.count({ where: { participantId: q.id, formKey: 'protocol_deviation' } })).toBe(0);
  });
});

describe('worklists', () => {
  it('the assessor sees open and overdue blinded visits of their sites, sorted by the last day, nothing arm-revealing', async () => {
    const daysAgo = (n: number) => new Date(Date.now() - n * 86400000).toISOString().slice(0, 10);
    // Repair 84 days ago: week 12 open; week 6 more than 28 days past its window, so missed and off the list.
    const p = await randomisedWithRepair(daysAgo(84));
    // Repair 60 days ago: week 6 closed 13 days ago (overdue); week 12 not yet open.
    const q = await randomisedWithRepair(daysAgo(60));
    const a = await signedIn(DEMO.assessorHHC);
    const r = await a.get('/api/studies/TEMPO-FT/worklist');
    expect(r.status).toBe(200);
    const of = (id: number) => r.body.rows.filter((x: { participantId: number }) => x.participantId === id).map((x: { visitKey: string; status: string }) => [x.visitKey, x.status]);
    expect(of(p.id)).toEqual([['week12', 'open']]);
    expect(of(q.id)).toEqual([['week6', 'overdue']]);
    const lasts = r.body.rows.map((x: { latest: string }) => x.latest);
    expect([...lasts].sort()).toEqual(lasts);
    expect(r.body.rows.every((x: { siteCode: string }) => x.siteCode === 'HHC')).toBe(true);
    const text = JSON.stringify(r.body) + (await a.page('/studies/TEMPO-FT/worklist')).html;
    for (const w of ARM_WORDS) expect(text).not.toContain(w);
    // The coordinator's list has the unblinded visits too; another role gets 403.
    const c = await signedIn(DEMO.coordinatorHHC);
    const cl = await c.get('/api/studies/TEMPO-FT/worklist?kind=coordinator');
    expect(cl.body.rows.some((x: { participantId: number; visitKey: string }) => x.participantId === p.id && x.visitKey === 'week12')).toBe(true);
    expect((await c.get('/api/studies/TEMPO-FT/worklist?kind=assessor')).status).toBe(403);
    expect((await (await signedIn(DEMO.monitor)).get('/api/studies/TEMPO-FT/worklist')).status).toBe(403);
  });
});

describe('reminders', () => {
  it('dueReminders: open, two days before closing, overdue', () => {
    const v = { blinded: true, required: true, earliest: '2026-12-20', latest: '2027-01-03', completedOn: null };
    expect(dueReminders(v, '2026-12-19')).toEqual([]);
    expect(dueReminders(v, '2026-12-20')).toEqual(['window_open']);
    expect(dueReminders(v, '2027-01-01')).toEqual(['window_open', 'closing_soon']);
    expect(dueReminders(v, '2027-01-04')).toEqual(['overdue']);
    expect(dueReminders({ ...v, completedOn: '2026-12-22' }, '2027-01-04')).toEqual([]);
    expect(dueReminders({ ...v, blinded: false }, '2026-12-21')).toEqual([]);
  });

  it('the right people get one e-mail each; a second run sends nothing new; blinded e-mails carry no arm', async () => {
    const kvh = await siteOf(study.id, 'KVH');
    const assessor = await makeUser([{ role: 'assessor', site: 'KVH' }]);
    const coordinator = await makeUser([{ role: 'coordinator', site: 'KVH' }]);
    const c = new Client();
    await c.signIn(coordinator.email, TEST_PASSWORD);
    // Repair 83 days ago: week 12 window open; the earlier visits are past their windows and not recorded.
    const repair = new Date(Date.now() - 83 * 86400000).toISOString().slice(0, 10);
    const p = await readyParticipant(study, kvh, { coordinatorId: coordinator.user.id, skip: ['operation'] });
    const inj = new Date(Date.now() - 84 * 86400000).toISOString().slice(0, 10);
    await saveRecord({ study, siteId: kvh.id, participantId: p.id, formKey: 'operation', data: { ...example('operation'), INJDAT: inj, REPDAT: repair }, intent: 'submit', baseVersion: null, actor: { userId: coordinator.user.id, roles: ['coordinator'] }, today: TODAY });
    const alloc = await randomiseParticipant({ study, site: kvh, participantId: p.id, actor: { userId: coordinator.user.id, role: 'coordinator' } });
    const first = await runReminders();
    expect(first.sent).toBeGreaterThan(0);
    const about = (to: string) => allMail().then((ms) => ms.filter((m) => m.to.includes(to) && m.subject.includes(alloc.subjectCode)));
    const toAssessor = await about(assessor.email);
    const toCoordinator = await about(coordinator.email);
    expect(toAssessor.map((m) => m.subject).sort()).toEqual([`Excursion: Week 12 (primary) window open for ${alloc.subjectCode}`]);
    // No baseline reminder: the baseline visit was done on the day of randomisation (its form came first).
    expect(toCoordinator.map((m) => m.subject).sort()).toEqual(
      ['Therapy start', 'Week 2', 'Week 4', 'Week 6'].map((l) => `Excursion: ${l} overdue for ${alloc.subjectCode}`).sort(),
    );
    for (const m of toAssessor) for (const w of ARM_WORDS) expect(m.subject + m.text).not.toContain(w);
    const second = await runReminders();
    expect(second.sent).toBe(0);
    expect((await about(assessor.email)).length).toBe(1);
    expect((await about(coordinator.email)).length).toBe(4);
    const p2 = await Participant.findByPk(p.id);
    expect(await ReminderLog.count({ where: { visitId: (await Visit.findAll({ where: { participantId: p2!.id } })).map((v) => v.id) } })).toBe(5);
  });
});

describe('therapy sessions against the allocated programme', () => {
  it('an exercise the current phase does not allow creates an unblinded-only deviation; a correct session does not', async () => {
    const p = await randomisedWithRepair('2026-11-20');
    const alloc = (await import('@/models')).Allocation;
    const arm = (await alloc.findOne({ where: { participantId: p.id } }))!.arm;
    const therapist = (await User.findOne({ where: { email: DEMO.therapistHHC } }))!;
    // Day 10: resisted work is outside every early phase of both arms (common practice programmes).
    const bad = { ...example('therapy_session'), session_date: '2026-11-30', exercises: [{ kind: 'resisted', repetitions: 10 }] };
    await saveRecord({ study, siteId: hhc.id, participantId: p.id, formKey: 'therapy_session', data: bad, intent: 'submit', baseVersion: null, actor: { userId: therapist.id, roles: ['therapist'] }, today: TODAY });
    const devs = await CrfRecord.findAll({ where: { participantId: p.id, formKey: 'protocol_deviation' } });
    expect(devs).toHaveLength(1);
    expect(devs[0].data).toMatchObject({ DVCAT: 'wrong_exercise_for_phase', reveals_allocation: 'Y' });
    expect(String(devs[0].data.DVTERM)).toMatch(/day 10/);
    const good = { ...example('therapy_session'), session_date: '2026-11-30', exercises: [{ kind: arm === 'EPM' ? 'passive_flexion' : 'place_and_hold', repetitions: 10 }] };
    await saveRecord({ study, siteId: hhc.id, participantId: p.id, formKey: 'therapy_session', instance: 2, data: good, intent: 'submit', baseVersion: null, actor: { userId: therapist.id, roles: ['therapist'] }, today: TODAY });
    expect(await CrfRecord.count({ where: { participantId: p.id, formKey: 'protocol_deviation' } })).toBe(1);
    // The blinded assessor sees neither the session nor the deviation that reveals the arm.
    const a = await signedIn(DEMO.assessorHHC);
    const book = await a.get(`/api/studies/TEMPO-FT/sites/HHC/participants/${p.id}`);
    expect(book.body.records.map((r: { formKey: string }) => r.formKey)).not.toContain('protocol_deviation');
    expect(book.body.records.map((r: { formKey: string }) => r.formKey)).not.toContain('therapy_session');
    expect((await a.get(`/api/studies/TEMPO-FT/sites/HHC/participants/${p.id}/forms/protocol_deviation`)).status).toBe(403);
    const t = await signedIn(DEMO.therapistHHC);
    expect((await t.get(`/api/studies/TEMPO-FT/sites/HHC/participants/${p.id}`)).body.records.map((r: { formKey: string }) => r.formKey)).toContain('protocol_deviation');
    // Adherence: the two sessions were logged on day 10 (week 2); only the one with exercises the day allows is counted by the programme's rules for that day.
    const adh = await t.get(`/api/studies/TEMPO-FT/sites/HHC/participants/${p.id}/adherence`);
    expect(adh.status).toBe(200);
    const wk2 = adh.body.weeks.find((w: { week: number }) => w.week === 2);
    expect(wk2.logged).toBeGreaterThanOrEqual(1);
    expect(wk2.prescribed).toBeGreaterThan(wk2.logged);
    expect((await a.get(`/api/studies/TEMPO-FT/sites/HHC/participants/${p.id}/adherence`)).status).toBe(403);
  });
});
