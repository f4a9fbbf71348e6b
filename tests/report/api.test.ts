// The trial report API and page (statistician and data manager, never blinded roles) on a study of its own with
// known records, and the sample-size API against the SS-* values of the published check values (§4.6: R's
// power.t.test / power.prop.test help-page examples).
import { describe, it, expect, beforeAll } from 'vitest';
import { AccessLog, Allocation, type Study } from '@/models';
import { Client, DEMO, signedIn } from '../support/http';
import { buildReportStudy, type ReportStudy, type Who } from './fixture';

let fx: ReportStudy;
let study: Study;
let blindStudy: Study;
let users: ReportStudy['users'];
let expected: ReportStudy['expected'];
const as = (who: Who) => fx.as(who);

beforeAll(async () => {
  fx = await buildReportStudy();
  ({ study, blindStudy, users, expected } = fx);
});

describe('GET /api/studies/:study/report — who may open it', () => {
  it('401 without a session', async () => {
    const r = await new Client().get(`/api/studies/${study.code}/report`);
    expect(r.status).toBe(401);
  });

  it.each(['assessor', 'coordinator', 'investigator', 'monitor'] as Who[])('403 for the %s (the report is by arm)', async (who) => {
    const r = await (await as(who)).get(`/api/studies/${study.code}/report`);
    expect(r.status).toBe(403);
    expect(r.body.error.code).toBe('forbidden');
    expect(JSON.stringify(r.body)).not.toMatch(/EPM|EAM/);
  });

  it('403 for a statistician the study configuration names as blinded', async () => {
    const r = await (await as('statistician')).get(`/api/studies/${blindStudy.code}/report`);
    expect(r.status).toBe(403);
    expect(r.body.error.message).toMatch(/blinded/);
  });

  it('the report page answers 404 to refused roles and to the blinded statistician', async () => {
    expect((await (await as('coordinator')).page(`/studies/${study.code}/report`)).status).toBe(404);
    expect((await (await as('assessor')).page(`/studies/${study.code}/report`)).status).toBe(404);
    expect((await (await as('statistician')).page(`/studies/${blindStudy.code}/report`)).status).toBe(404);
  });
});

describe('GET /api/studies/:study/report — what it shows', () => {
  it('the statistician gets the tables from the live database: arms from the allocations, submitted records only', async () => {
    const before = await AccessLog.count({ where: { userId: users.statistician.user.id, event: 'download' } });
    const r = await (await as('statistician')).get(`/api/studies/${study.code}/report`);
    expect(r.status).toBe(200);
    expect(r.body.source.kind).toBe('live');
    expect(r.body.arms.map((a: { code: string }) => a.code)).toEqual(['EPM', 'EAM']);

    const allocations = await Allocation.findAll({ where: { studyId: study.id } });
    expect(allocations).toHaveLength(6);
    const armOf = new Map(allocations.map((a) => [a.participantId, a.arm]));
    for (const arm of ['EPM', 'EAM']) {
      const ids = [...expected.keys()].filter((id) => armOf.get(id) === arm);
      expect(r.body.randomised[arm]).toBe(ids.length);
      // The points are exactly the derived percentages of the participants in that arm with a submitted week-12 visit.
      const want = ids.map((id) => expected.get(id)!.pct).filter((v): v is number => v !== null).sort((a, b) => a - b);
      const got = r.body.primary.points.filter((p: { arm: string }) => p.arm === arm).map((p: { value: number }) => p.value).sort((a: number, b: number) => a - b);
      expect(got).toEqual(want);
      const byArm = r.body.primary.byArm.find((a: { arm: string }) => a.arm === arm);
      expect(byArm.n + byArm.missing).toBe(ids.length);
      const rup = r.body.secondary.rupture.byArm.find((a: { arm: string }) => a.arm === arm);
      expect(rup.events).toBe(ids.filter((id) => expected.get(id)!.rupture).length);
    }
    expect(r.body.randomised.total).toBe(6);
    // Baseline from the example forms: every participant is 34, male, right-dominant with a right-hand repair.
    const age = r.body.baseline.find((b: { variable: string }) => b.variable === 'age');
    expect(age.cells.total).toMatchObject({ n: 6, mean: 34, sd: 0 });
    const dom = r.body.baseline.find((b: { variable: string }) => b.variable === 'dominant_hand_injured');
    expect(dom.levels.find((l: { code: string }) => l.code === 'yes').cells.total.count).toBe(6);
    // The missing-data table counts the participant whose week-12 visit is only a draft.
    const miss = r.body.missing.find((m: { outcome: string }) => m.outcome === 'tam_pct_other_hand');
    expect(miss.byArm.reduce((s: number, a: { missing: number }) => s + a.missing, 0)).toBe(1);
    // The unblinded participant is flagged with its arm.
    const unblindedId = [...expected.entries()].find(([, e]) => e.unblinded)![0];
    expect(r.body.unblinded).toHaveLength(1);
    expect(r.body.unblinded[0]).toMatchObject({ site: 'AAA', arm: armOf.get(unblindedId) });
    expect(r.body.unblinded[0].unblindedAt).toMatch(/^\d{4}-\d{2}-\d{2}T.*Z$/);
    // Viewing the report is written to the access log.
    expect(await AccessLog.count({ where: { userId: users.statistician.user.id, event: 'download' } })).toBe(before + 1);
  });

  it('the data manager may open it too, and the page says the tables are provisional until a locked snapshot', async () => {
    const c = await as('dataManager');
    expect((await c.get(`/api/studies/${study.code}/report`)).status).toBe(200);
    const page = await c.page(`/studies/${study.code}/report`);
    expect(page.status).toBe(200);
    expect(page.html).toContain('Provisional');
    expect(page.html).toContain('final only when computed from a locked snapshot');
    expect(page.html).toContain('Baseline characteristics');
  });

  it('the study page links the report and the calculator for the statistician, only the calculator for the investigator, neither for the assessor', async () => {
    const stat = (await (await as('statistician')).page(`/studies/${study.code}`)).html;
    expect(stat).toContain(`/studies/${study.code}/report`);
    expect(stat).toContain(`/studies/${study.code}/sample-size`);
    const inv = (await (await as('investigator')).page(`/studies/${study.code}`)).html;
    expect(inv).not.toContain(`/studies/${study.code}/report`);
    expect(inv).toContain(`/studies/${study.code}/sample-size`);
    const ass = (await (await as('assessor')).page(`/studies/${study.code}`)).html;
    expect(ass).not.toContain(`/studies/${study.code}/report`);
    expect(ass).not.toContain(`/studies/${study.code}/sample-size`);
  });
});

describe('POST /api/studies/:study/sample-size', () => {
  const url = () => `/api/studies/${study.code}/sample-size`;

  it('SS-2: power.t.test(power = .90, delta = 1): n = 22.02110 per group → 23', async () => {
    const r = await (await as('statistician')).post(url(), { kind: 'two_means', delta: 1, sd: 1, power: 0.9 });
    expect(r.status).toBe(200);
    // R finds n with uniroot (tolerance about 1e-4, §4.6 note in lib/stats/power.ts); computed 22.021095275583.
    expect(Math.abs(r.body.n - 22.0211)).toBeLessThan(1e-4);
    expect(Math.abs(r.body.n - 22.021095275583)).toBeLessThan(1e-6);
    expect(r.body).toMatchObject({ kind: 'two_means', perGroup: 23, total: 46, withDropout: null });
    expect(r.body.inputs).toEqual({ delta: 1, sd: 1, alpha: 0.05, power: 0.9, alternative: 'two-sided' });
    expect(r.body.caution).toMatch(/planning aid/i);
  });

  it('SS-8: Δ = 0.5 SD, power 80 %: t-based 63.77 → 64 per group (also as delta 5, sd 10)', async () => {
    const r = await (await as('investigator')).post(url(), { kind: 'two_means', delta: 5, sd: 10, power: 0.8, alpha: 0.05, alternative: 'two-sided' });
    expect(r.status).toBe(200);
    expect(r.body.n).toBeCloseTo(63.77, 2);
    expect(r.body.perGroup).toBe(64);
  });

  it('SS-5: power.prop.test(p1 = .50, p2 = .75, power = .90): n = 76.7 → 77 per group; with 10 % loss 86 (n/(1 − dropout), common practice)', async () => {
    const c = await as('dataManager');
    const r = await c.post(url(), { kind: 'two_proportions', p1: 0.5, p2: 0.75, power: 0.9 });
    expect(r.status).toBe(200);
    expect(Math.abs(r.body.n - 76.70692845177747)).toBeLessThan(1e-9);
    expect(r.body.n.toFixed(1)).toBe('76.7');
    expect(r.body).toMatchObject({ perGroup: 77, total: 154 });
    const d = await c.post(url(), { kind: 'two_proportions', p1: 0.5, p2: 0.75, power: 0.9, dropout: 0.1 });
    expect(d.body.withDropout).toEqual({ dropout: 0.1, perGroup: 86, total: 172 });
  });

  it('defaults: alpha 0.05, power 0.8, two-sided', async () => {
    const r = await (await as('statistician')).post(url(), { kind: 'two_means', delta: 0.5, sd: 1 });
    expect(r.body.inputs).toEqual({ delta: 0.5, sd: 1, alpha: 0.05, power: 0.8, alternative: 'two-sided' });
    expect(r.body.perGroup).toBe(64); // SS-8
  });

  it.each([
    ['alpha 0', { kind: 'two_means', delta: 1, sd: 1, alpha: 0 }, 'alpha', /greater than 0/],
    ['alpha above 0.5', { kind: 'two_means', delta: 1, sd: 1, alpha: 0.6 }, 'alpha', /at most 0.5/],
    ['power 1', { kind: 'two_means', delta: 1, sd: 1, power: 1 }, 'power', /below 1/],
    ['power 0.3', { kind: 'two_means', delta: 1, sd: 1, power: 0.3 }, 'power', /at least 0.5/],
    ['sd 0', { kind: 'two_means', delta: 1, sd: 0 }, 'sd', /greater than 0/],
    ['delta 0', { kind: 'two_means', delta: 0, sd: 1 }, 'delta', /must not be 0/],
    ['delta as text', { kind: 'two_means', delta: 'ten', sd: 1 }, 'delta', /number/],
    ['p1 above 1', { kind: 'two_proportions', p1: 1.2, p2: 0.5 }, 'p1', /less than 1/],
    ['p2 of 0', { kind: 'two_proportions', p1: 0.2, p2: 0 }, 'p2', /greater than 0/],
    ['equal proportions', { kind: 'two_proportions', p1: 0.3, p2: 0.3 }, 'p2', /must differ/],
    ['dropout 0.9', { kind: 'two_proportions', p1: 0.3, p2: 0.5, dropout: 0.9 }, 'dropout', /at most 0.8/],
    ['an unknown field', { kind: 'two_means', delta: 1, sd: 1, n: 20 }, 'n', /not allowed/],
    ['a missing sd', { kind: 'two_means', delta: 1 }, 'sd', /required/],
  ])('400 for %s, naming the field', async (_name, body, field, message) => {
    const r = await (await as('statistician')).post(url(), body);
    expect(r.status).toBe(400);
    expect(r.body.error.code).toBe('validation_failed');
    expect(r.body.error.fields[field]).toMatch(message);
  });

  it('400 for an unknown kind, and for an effect too small to plan (more than 10 million per group)', async () => {
    const c = await as('statistician');
    const k = await c.post(url(), { kind: 'anova', delta: 1, sd: 1 });
    expect(k.status).toBe(400);
    expect(k.body.error.code).toBe('validation_failed');
    const tiny = await c.post(url(), { kind: 'two_means', delta: 0.0001, sd: 10 });
    expect(tiny.status).toBe(400);
    expect(tiny.body.error.code).toBe('invalid_input');
    expect(tiny.body.error.message).toMatch(/10 million/);
  });

  it('401 without a session; 403 for the coordinator and the assessor', async () => {
    expect((await new Client().post(url(), { kind: 'two_means', delta: 1, sd: 1 })).status).toBe(401);
    expect((await (await as('coordinator')).post(url(), { kind: 'two_means', delta: 1, sd: 1 })).status).toBe(403);
    expect((await (await as('assessor')).post(url(), { kind: 'two_means', delta: 1, sd: 1 })).status).toBe(403);
  });

  it('the demo statistician can use it in TEMPO-FT', async () => {
    const r = await (await signedIn(DEMO.statistician)).post('/api/studies/TEMPO-FT/sample-size', { kind: 'two_means', delta: 1, sd: 1, power: 0.9 });
    expect(r.status).toBe(200);
    expect(r.body.perGroup).toBe(23); // SS-2
  });
});

// Last in this file: it hard-locks the fixture study.
describe('after the hard lock', () => {
  it('the report comes from the locked snapshot and equals the tables of the data it froze', async () => {
    const { setLock } = await import('@/lib/lock');
    const live = await (await as('statistician')).get(`/api/studies/${study.code}/report`);
    const dm = { userId: users.dataManager.user.id, role: 'data_manager' as const };
    await setLock({ studyId: study.id, siteId: null, level: 'soft', actor: dm });
    const locked = await setLock({ studyId: study.id, siteId: null, level: 'hard', override: true, reason: 'report from the snapshot', actor: dm });
    expect('snapshot' in locked && locked.snapshot && 'id' in locked.snapshot).toBe(true);
    const r = await (await as('statistician')).get(`/api/studies/${study.code}/report`);
    expect(r.status).toBe(200);
    expect(r.body.source.kind).toBe('snapshot');
    expect(r.body.source.label).toMatch(/^Locked snapshot \d+/);
    const { source: _a, ...fromSnapshot } = r.body;
    const { source: _b, ...fromLive } = live.body;
    expect(fromSnapshot).toEqual(fromLive);
    const page = await (await as('statistician')).page(`/studies/${study.code}/report`);
    expect(page.status).toBe(200);
  });
});
