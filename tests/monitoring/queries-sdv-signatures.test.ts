// Monitoring: the data-query lifecycle and its permissions, queries from soft edit checks, source data
// verification cleared by a later change, electronic signatures, and the SAE 24-hour clock.
import { describe, it, expect, beforeAll } from 'vitest';
import { CrfRecord, Query, SaeReport, User, sequelize } from '@/models';
import { saveRecord } from '@/lib/crf/records';
import { demoStudy, makeUser, siteOf, TEST_PASSWORD } from '../support/factories';
import { Client, DEMO, DEMO_PASSWORD, signedIn } from '../support/http';
import { count } from '../support/db';
import { waitForMail } from '../support/mail';
import { coordinatorOf, example, readyParticipant } from '../support/ready';
import type { Site, Study } from '@/models';

let study: Study;
let hhc: Site;
const base = (p: number) => `/api/studies/TEMPO-FT/sites/HHC/participants/${p}`;

beforeAll(async () => {
  study = await demoStudy();
  hhc = await siteOf(study.id, 'HHC');
});

async function baselineRecord() {
  const p = await readyParticipant(study, hhc, { skip: ['eligibility', 'consent', 'operation'] });
  const rec = (await CrfRecord.findOne({ where: { participantId: p.id, formKey: 'baseline' } }))!;
  return { p, rec };
}

describe('data queries', () => {
  it('open → answered → closed → re-opened, each step audited; the site is e-mailed when a query opens', async () => {
    const { p, rec } = await baselineRecord();
    const monitor = await signedIn(DEMO.monitor);
    const auditBefore = await count(sequelize, 'audit_events', "entity_type = 'query'");
    const o = await monitor.post('/api/studies/TEMPO-FT/sites/HHC/queries', { recordId: rec.id, itemPath: '/AGE', message: 'Source says 42; please check the age.' });
    expect(o.status).toBe(200);
    expect(o.body.state).toBe('open');
    await waitForMail('coordinator.hhc@tempo-ft.example', (m) => m.text.includes('Source says 42'));
    const q = o.body.id;
    expect((await (await signedIn(DEMO.coordinatorMLB)).post(`/api/studies/TEMPO-FT/sites/HHC/queries/${q}/answer`, { text: 'checked' })).status).toBe(403);
    expect((await (await signedIn(DEMO.coordinatorMLB)).post(`/api/studies/TEMPO-FT/sites/MLB/queries/${q}/answer`, { text: 'checked' })).status).toBe(404);
    const coord = await signedIn(DEMO.coordinatorHHC);
    expect((await coord.post(`/api/studies/TEMPO-FT/sites/HHC/queries/${q}/close`, {})).status).toBe(403);
    const a = await coord.post(`/api/studies/TEMPO-FT/sites/HHC/queries/${q}/answer`, { text: 'Checked the notes: 41 is right.' });
    expect(a.body.state).toBe('answered');
    // Another monitor did not open it and may not close it; the opener may.
    const other = await makeUser([{ role: 'monitor', site: null }]);
    const m2 = new Client();
    await m2.signIn(other.email, TEST_PASSWORD);
    expect((await m2.post(`/api/studies/TEMPO-FT/sites/HHC/queries/${q}/close`, {})).status).toBe(403);
    expect((await monitor.post(`/api/studies/TEMPO-FT/sites/HHC/queries/${q}/close`, { text: 'Accepted.' })).body.state).toBe('closed');
    expect((await (await signedIn(DEMO.dataManager)).post(`/api/studies/TEMPO-FT/sites/HHC/queries/${q}/reopen`, { text: 'Age still differs from the source.' })).body.state).toBe('open');
    expect(await count(sequelize, 'audit_events', "entity_type = 'query'")).toBe(auditBefore + 4);
    const list = await monitor.get('/api/studies/TEMPO-FT/sites/HHC/queries?state=open&form=baseline');
    expect(list.body.rows.map((r: { id: number }) => r.id)).toContain(q);
    expect(list.body.counts.open).toBeGreaterThan(0);
    expect(list.body.rows.find((r: { id: number }) => r.id === q).messages.map((m: { kind: string }) => m.kind)).toEqual(['open', 'answer', 'close', 'reopen']);
    expect(p.id).toBe(rec.participantId);
    // The list names the participant and the form, and carries the record's slot for the link.
    expect(list.body.rows.find((r: { id: number }) => r.id === q)).toMatchObject({ participant: p.subjectCode ?? p.screeningNumber, formTitle: 'Baseline', visitKey: '', instance: 1 });
  });

  it('a query on a second adverse event is listed with its instance, so the link opens that record', async () => {
    const { p } = await baselineRecord();
    const coord = await coordinatorOf('HHC');
    const actor = { userId: coord.id, roles: ['coordinator' as const] };
    for (const instance of [1, 2]) {
      await saveRecord({ study, siteId: hhc.id, participantId: p.id, formKey: 'adverse_event', instance, data: example('adverse_event'), intent: 'draft', baseVersion: null, actor, today: '2026-12-02' });
    }
    const second = (await CrfRecord.findOne({ where: { participantId: p.id, formKey: 'adverse_event', instance: 2 } }))!;
    const monitor = await signedIn(DEMO.monitor);
    const o = await monitor.post('/api/studies/TEMPO-FT/sites/HHC/queries', { recordId: second.id, itemPath: '/AETERM', message: 'Is this the same event as the first one?' });
    expect(o.status).toBe(200);
    const list = await monitor.get('/api/studies/TEMPO-FT/sites/HHC/queries?state=open&form=adverse_event');
    expect(list.body.rows.find((r: { id: number }) => r.id === o.body.id)).toMatchObject({ recordId: second.id, instance: 2, visitKey: '', formTitle: 'Adverse event' });
  });

  it('a monitor cannot change a clinical value or open a query outside the roles', async () => {
    const { p } = await baselineRecord();
    const monitor = await signedIn(DEMO.monitor);
    const r = await monitor.json('PUT', `${base(p.id)}/forms/baseline`, { data: { ...example('baseline'), AGE: 50 }, intent: 'submit', baseVersion: 1, reason: { code: 'other' } });
    expect(r.status).toBe(403);
    expect((await (await signedIn(DEMO.coordinatorHHC)).post('/api/studies/TEMPO-FT/sites/HHC/queries', { recordId: 1, itemPath: '/AGE', message: 'not allowed to open' })).status).toBe(403);
  });

  it('a soft edit-check finding opens a query automatically; a change with the reason "query response" answers it', async () => {
    const p = await readyParticipant(study, hhc, { skip: ['eligibility', 'consent', 'baseline', 'operation'] });
    const coord = await coordinatorOf('HHC');
    const actor = { userId: coord.id, roles: ['coordinator' as const] };
    const r1 = await saveRecord({ study, siteId: hhc.id, participantId: p.id, formKey: 'baseline', data: { ...example('baseline'), AGE: 82 }, intent: 'submit', baseVersion: null, actor, today: '2026-12-02' });
    const q = (await Query.findOne({ where: { recordId: r1.id, source: 'edit_check' } }))!;
    expect(q).toMatchObject({ ruleId: 'age-within-eligibility', itemPath: '/AGE', state: 'open' });
    await saveRecord({ study, siteId: hhc.id, participantId: p.id, formKey: 'baseline', data: { ...example('baseline'), AGE: 62 }, intent: 'submit', baseVersion: r1.lockVersion, reason: { code: 'query_response', text: 'typo, 62 in the notes' }, actor, today: '2026-12-02' });
    expect((await q.reload()).state).toBe('answered');
  });
});

describe('source data verification', () => {
  it('a monitor verifies an item; a later change clears it (audited); only monitors verify', async () => {
    const { p, rec } = await baselineRecord();
    const monitor = await signedIn(DEMO.monitor);
    expect((await (await signedIn(DEMO.coordinatorHHC)).post(`${base(p.id)}/verify`, { recordId: rec.id, itemPath: '/AGE' })).status).toBe(403);
    expect((await monitor.post(`${base(p.id)}/verify`, { recordId: rec.id, itemPath: '/AGE' })).status).toBe(200);
    expect((await monitor.post(`${base(p.id)}/verify`, { recordId: rec.id, itemPath: '' })).status).toBe(200);
    const coord = await coordinatorOf('HHC');
    await saveRecord({ study, siteId: hhc.id, participantId: p.id, formKey: 'baseline', data: { ...example('baseline'), smoking: 'never' }, intent: 'submit', baseVersion: rec.lockVersion, reason: { code: 'late_information' }, actor: { userId: coord.id, roles: ['coordinator'] }, today: '2026-12-02' });
    const { verificationsOf } = await import('@/lib/monitoring/verification');
    const vs = await verificationsOf(rec.id);
    // The whole-form mark is cleared by any change; the AGE mark stays because AGE did not change.
    expect(vs.find((v) => v.itemPath === '')!.cleared).toBe(true);
    expect(vs.find((v) => v.itemPath === '/AGE')!.cleared).toBe(false);
    await saveRecord({ study, siteId: hhc.id, participantId: p.id, formKey: 'baseline', data: { ...example('baseline'), smoking: 'never', AGE: 44 }, intent: 'submit', baseVersion: rec.lockVersion + 1, reason: { code: 'transcription_error' }, actor: { userId: coord.id, roles: ['coordinator'] }, today: '2026-12-02' });
    expect((await verificationsOf(rec.id)).find((v) => v.itemPath === '/AGE')!.cleared).toBe(true);
    expect(await count(sequelize, 'audit_events', "entity_type = 'verification' AND action = 'clear' AND entity_id = ?", [String(rec.id)])).toBe(2);
  });
});

describe('electronic signatures', () => {
  it('needs the right password and the investigator role; a change invalidates it', async () => {
    const { p, rec } = await baselineRecord();
    const inv = await signedIn(DEMO.investigator);
    const url = `${base(p.id)}/signatures`;
    expect((await inv.post(url, { password: 'wrong-password-here', confirm: true })).status).toBe(401);
    for (const who of [DEMO.monitor, DEMO.statistician, DEMO.admin, DEMO.coordinatorHHC]) expect((await (await signedIn(who)).post(url, { password: DEMO_PASSWORD, confirm: true })).status, who).toBe(403);
    const s = await inv.post(url, { password: DEMO_PASSWORD, confirm: true });
    expect(s.status).toBe(200);
    expect(s.body).toMatchObject({ signer: 'Iris Penhaligon', meaning: 'I confirm these data are accurate and complete.', status: 'valid' });
    expect(s.body.signedAt).toMatch(/Z$/);
    const coord = await coordinatorOf('HHC');
    await saveRecord({ study, siteId: hhc.id, participantId: p.id, formKey: 'baseline', data: { ...example('baseline'), diabetes: 'Y' }, intent: 'submit', baseVersion: rec.lockVersion, reason: { code: 'late_information' }, actor: { userId: coord.id, roles: ['coordinator'] }, today: '2026-12-02' });
    const after = await inv.get(url);
    expect(after.body.rows[0]).toMatchObject({ status: 'invalidated', invalidatedReason: 'baseline changed after signing' });
    expect(await count(sequelize, 'audit_events', "entity_type = 'signature' AND action = 'invalidate' AND entity_id = ?", [String(s.body.id)])).toBe(1);
  });
});

describe('serious adverse events', () => {
  it('an SAE e-mails the investigator at once and shows its 24-hour deadline; a past deadline is overdue', async () => {
    const p = await readyParticipant(study, hhc, { skip: ['eligibility', 'consent', 'baseline', 'operation'] });
    const coord = await coordinatorOf('HHC');
    const aware = new Date(Date.now() - 2 * 3600_000).toISOString().replace(/\.\d+Z$/, 'Z');
    const sae = { ...example('adverse_event', 'valid-2'), aware_datetime: aware, AESTDAT: aware.slice(0, 10), AEENDAT: undefined };
    delete (sae as Record<string, unknown>).AEENDAT;
    const rec = await saveRecord({ study, siteId: hhc.id, participantId: p.id, formKey: 'adverse_event', data: sae, intent: 'submit', baseVersion: null, actor: { userId: coord.id, roles: ['coordinator'] }, today: new Date().toISOString().slice(0, 10) });
    const r = (await SaeReport.findOne({ where: { recordId: rec.id } }))!;
    expect(r.deadlineAt.getTime() - r.awareAt.getTime()).toBe(24 * 3600_000);
    await waitForMail('investigator@tempo-ft.example', (m) => m.subject.includes('SERIOUS adverse event') && m.text.includes(r.deadlineAt.toISOString()));
    await waitForMail('safety@tempo-ft.example', (m) => m.subject.includes('SERIOUS adverse event') && m.text.includes(r.deadlineAt.toISOString()));
    const inv = await signedIn(DEMO.investigator);
    const list = await inv.get('/api/studies/TEMPO-FT/safety');
    expect(list.body.rows.find((x: { recordId: number }) => x.recordId === rec.id).state).toBe('awaiting follow-up');
    await r.update({ awareAt: new Date(Date.now() - 30 * 3600_000), deadlineAt: new Date(Date.now() - 6 * 3600_000) });
    expect((await inv.get('/api/studies/TEMPO-FT/safety')).body.rows.find((x: { recordId: number }) => x.recordId === rec.id).state).toBe('overdue');
    // A non-serious event starts no clock.
    const q = await readyParticipant(study, hhc, { skip: ['eligibility', 'consent', 'baseline', 'operation'] });
    const ae = await saveRecord({ study, siteId: hhc.id, participantId: q.id, formKey: 'adverse_event', data: example('adverse_event', 'valid-1'), intent: 'submit', baseVersion: null, actor: { userId: coord.id, roles: ['coordinator'] }, today: '2026-12-02' });
    expect(await SaeReport.count({ where: { recordId: ae.id } })).toBe(0);
    expect((await (await signedIn(DEMO.coordinatorHHC)).get('/api/studies/TEMPO-FT/safety')).status).toBe(403);
    expect(await User.count()).toBeGreaterThan(0);

    // The investigator records the follow-up: the clock stops, once only, audited; other roles cannot.
    const url = `/api/studies/TEMPO-FT/safety/${r.id}/follow-up`;
    expect((await (await signedIn(DEMO.coordinatorHHC)).post(url, { note: 'Reported to the sponsor.' })).status).toBe(403);
    expect((await (await signedIn(DEMO.monitor)).post(url, { note: 'Reported to the sponsor.' })).status).toBe(403);
    const short = await inv.post(url, { note: 'ok' });
    expect(short.status).toBe(400);
    expect(short.body.error.fields.note).toMatch(/at least 5/);
    const f = await inv.post(url, { note: 'Reported to the sponsor; re-repair planned.' });
    expect(f.status).toBe(200);
    expect(f.body.state).toBe('followed up');
    expect((await inv.post(url, { note: 'Reported to the sponsor again.' })).status).toBe(409);
    expect((await inv.get('/api/studies/TEMPO-FT/safety')).body.rows.find((x: { recordId: number }) => x.recordId === rec.id).state).toBe('followed up');
    expect(await count(sequelize, 'audit_events', "entity_type = 'sae' AND action = 'follow_up' AND entity_id = ?", [String(r.id)])).toBe(1);
    expect((await inv.post('/api/studies/TEMPO-FT/safety/999999999/follow-up', { note: 'Reported to the sponsor.' })).status).toBe(404);
  });
});
