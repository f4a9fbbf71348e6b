// The demo simulation: the same seed gives the same study (counts of every kind), a different seed a different one;
// everything goes through the domain functions, so the audit chain still verifies and derived scores exist.
import { describe, it, expect, beforeAll } from 'vitest';
import { CrfRecord, Site, Study, sequelize } from '@/models';
import { DEMO_STUDY } from '@/lib/studies/demo';
import { pinForm } from '@/lib/crf/definitions';
import { simulateStudy, studyCounts } from '@/lib/studies/simulate';
import { verifyAuditChain } from '@/lib/audit';
import { dashboard } from '@/lib/monitoring/dashboard';
import { makeUser, TEST_PASSWORD, uniq } from '../support/factories';

const FORMS = ['eligibility', 'consent', 'baseline', 'operation', 'follow_up', 'adverse_event', 'protocol_deviation', 'end_of_participation', 'therapy_session'];

async function freshStudy() {
  const code = uniq('SIM').toUpperCase();
  // Each simulated study gets a study-ID prefix of its own, so its IDs are told apart from other studies'.
  const config = { ...DEMO_STUDY.config, randomisation: { ...DEMO_STUDY.config.randomisation, subjectPrefix: code } };
  const study = await Study.create({ code, title: 'Simulation check', config, status: 'recruiting' });
  for (const s of DEMO_STUDY.sites) await Site.create({ studyId: study.id, ...s });
  for (const f of FORMS) await pinForm(study.id, f, 1, { userId: null, role: 'system' });
  const staff: Record<string, { coordinator: number; therapist: number; assessor: number }> = {};
  for (const s of DEMO_STUDY.sites) {
    const [c, t, a] = await Promise.all(['coordinator', 'therapist', 'assessor'].map((role) => makeUser([{ role: role as 'coordinator', site: s.code, studyId: study.id }])));
    staff[s.code] = { coordinator: c.user.id, therapist: t.user.id, assessor: a.user.id };
  }
  const [inv, mon, dm] = await Promise.all(['investigator', 'monitor', 'data_manager'].map((role) => makeUser([{ role: role as 'monitor', site: null, studyId: study.id }])));
  return { study, input: { studyId: study.id, staff, investigator: inv.user.id, monitor: mon.user.id, dataManager: dm.user.id, investigatorPassword: TEST_PASSWORD, participants: 24, months: 14, end: '2026-11-30' } };
}

describe('demo simulation', () => {
  let a: Awaited<ReturnType<typeof freshStudy>>;
  let summaryA: Awaited<ReturnType<typeof simulateStudy>>;
  beforeAll(async () => {
    a = await freshStudy();
    summaryA = await simulateStudy({ ...a.input, seed: 'check-1' });
  }, 240_000);

  it('is reproducible: the same seed gives the same counts; another seed gives other data', async () => {
    const b = await freshStudy();
    const summaryB = await simulateStudy({ ...b.input, seed: 'check-1' });
    expect(summaryB).toEqual(summaryA);
    expect(await studyCounts(b.study.id)).toEqual(await studyCounts(a.study.id));
    const c = await freshStudy();
    const summaryC = await simulateStudy({ ...c.input, seed: 'check-2' });
    expect(summaryC).not.toEqual(summaryA);
  }, 480_000);

  it('creates what monitoring needs: screening outcomes, randomisations, follow-ups, queries, signatures, an audit chain that verifies', async () => {
    expect(summaryA.screened).toBe(24);
    expect(summaryA.notEligible + summaryA.declined + summaryA.other + summaryA.randomised).toBe(24);
    expect(summaryA.randomised).toBeGreaterThan(10);
    expect(summaryA.followUps).toBeGreaterThan(0);
    const fu = await CrfRecord.findOne({ where: { studyId: a.study.id, formKey: 'follow_up', status: 'submitted' } });
    // The derived scores are computed by the app's own save path (TAM, QuickDASH).
    expect(Object.keys(fu!.derived).length).toBeGreaterThan(0);
    const d = await dashboard(a.study, 'all', ['investigator']);
    expect(d.totals.screened).toBe(24);
    expect(d.totals.randomised).toBe(summaryA.randomised);
    // Randomisation dates are the simulated ones: spread over months, not all today.
    const months = d.recruitmentChart.filter((m) => m.randomised !== null);
    expect(new Set(months.map((m) => m.randomised)).size).toBeGreaterThan(3);
    expect(months.at(-1)!.randomised).toBe(summaryA.randomised);
    const chain = await verifyAuditChain(sequelize);
    expect(chain.ok).toBe(true);
  });

  it("the dashboard's SQL counts equal the same counts made one participant and one visit at a time (visitStatus)", async () => {
    const { Allocation, Participant, Visit } = await import('@/models');
    const { visitStatus } = await import('@/lib/schedule');
    const now = new Date('2026-12-01T12:00:00Z');
    const d = await dashboard(a.study, 'all', ['investigator'], now);
    const visits = await Visit.findAll({ where: { studyId: a.study.id }, order: [['id', 'ASC']] });
    const byKey = new Map<string, Record<string, number>>();
    for (const v of visits) {
      const c = byKey.get(v.visitKey) ?? byKey.set(v.visitKey, { inWindow: 0, outOfWindow: 0, overdue: 0, missed: 0, open: 0, upcoming: 0 }).get(v.visitKey)!;
      const st = visitStatus({ target: v.target, earliest: v.earliest, latest: v.latest }, d.today, v.completedOn ?? undefined);
      c[{ done: 'inWindow', 'done-out-of-window': 'outOfWindow', overdue: 'overdue', missed: 'missed', open: 'open', upcoming: 'upcoming' }[st]]++;
    }
    expect(d.completeness.map(({ key, label: _l, ...c }) => [key, c])).toEqual([...byKey.entries()]);
    // Every status occurs somewhere in the simulated study, so each SQL rule was exercised.
    for (const k of ['inWindow', 'missed', 'upcoming']) expect(d.completeness.some((c) => (c as unknown as Record<string, number>)[k] > 0)).toBe(true);
    const ps = await Participant.findAll({ where: { studyId: a.study.id } });
    const allocated = new Set((await Allocation.findAll({ where: { studyId: a.study.id } })).map((x) => x.participantId));
    const consented = new Set((await CrfRecord.findAll({ where: { studyId: a.study.id, formKey: 'consent', status: 'submitted' } })).map((r) => r.participantId));
    const sites = await Site.findAll({ where: { studyId: a.study.id }, order: [['code', 'ASC']] });
    expect(d.recruitment.map((r) => [r.site, r.screened, r.eligible, r.consented, r.randomised])).toEqual(
      sites.map((s) => {
        const here = ps.filter((p) => p.siteId === s.id);
        return [s.code, here.length, here.filter((p) => p.screeningOutcome === 'eligible').length, here.filter((p) => consented.has(p.id)).length, here.filter((p) => allocated.has(p.id)).length];
      }),
    );
    const aes = await CrfRecord.count({ where: { studyId: a.study.id, formKey: 'adverse_event', status: 'submitted' } });
    expect(d.safety.adverseEvents).toBe(aes);
    expect(d.consort.assessed).toBe(ps.length);
    expect(d.consort.excluded.total).toBe(ps.filter((p) => ['not_eligible', 'declined', 'other'].includes(p.screeningOutcome as string)).length);
    expect(d.consort.randomised).toBe(allocated.size);
  });

  it('a locked study gets no visit reminders (nothing can be entered there)', async () => {
    const { setLock } = await import('@/lib/lock');
    const { runReminders } = await import('@/lib/reminders');
    const { ReminderLog, Visit } = await import('@/models');
    // Every simulated study of this file is soft-locked here, so their overdue visits e-mail nobody in later files.
    for (const s of await Study.findAll({ where: { title: 'Simulation check' } })) {
      const dm = (await import('@/models')).Membership.findOne({ where: { studyId: s.id, role: 'data_manager' } });
      await setLock({ studyId: s.id, siteId: null, level: 'soft', actor: { userId: (await dm)!.userId, role: 'data_manager' } });
    }
    const visitIds = (await Visit.findAll({ where: { studyId: a.study.id }, attributes: ['id'] })).map((v) => v.id);
    const before = await ReminderLog.count({ where: { visitId: visitIds } });
    await runReminders();
    expect(await ReminderLog.count({ where: { visitId: visitIds } })).toBe(before);
  }, 120_000);
});
