// The investigator's dashboard on a hand-built study with known counts: recruitment per site, funnel, CONSORT
// (pooled: no arm anywhere), queries and safety counts; and the browser view with screenshots.
import { describe, it, expect, beforeAll, afterAll } from 'vitest';
import type { Browser } from 'playwright-core';
import { Site, Study } from '@/models';
import { DEMO_STUDY } from '@/lib/studies/demo';
import { pinForm } from '@/lib/crf/definitions';
import { randomiseParticipant } from '@/lib/allocation';
import { setScreeningOutcome } from '@/lib/screening';
import { makeUser, TEST_PASSWORD, uniq } from '../support/factories';
import { Client } from '../support/http';
import { ensureActivated, example, readyParticipant } from '../support/ready';
import { launch, screenshot } from '../support/browser';
import { BASE } from '../support/http';

const ARM_WORDS = ['EPM', 'EAM', 'Early passive motion', 'Early active motion'];
let study: Study;
let inv: { email: string };

beforeAll(async () => {
  study = await Study.create({ code: uniq('DASH').toUpperCase(), title: 'Dashboard check', config: DEMO_STUDY.config, status: 'recruiting' });
  const aaa = await Site.create({ studyId: study.id, code: 'AAA', name: 'Alder Clinic', timeZone: 'UTC', recruitmentTarget: 10 });
  const bbb = await Site.create({ studyId: study.id, code: 'BBB', name: 'Birch Clinic', timeZone: 'UTC', recruitmentTarget: 6 });
  for (const f of ['eligibility', 'consent', 'baseline', 'operation', 'follow_up', 'adverse_event', 'protocol_deviation', 'end_of_participation', 'therapy_session']) await pinForm(study.id, f, 1, { userId: null, role: 'system' });
  await ensureActivated(study);
  const coordA = await makeUser([{ role: 'coordinator', site: null, studyId: study.id }]);
  inv = await makeUser([{ role: 'investigator', site: null, studyId: study.id }]);
  const opts = { coordinatorId: coordA.user.id };
  // AAA: two randomised, one not eligible (two-strand repair), one declined. BBB: one still awaiting eligibility.
  for (let i = 0; i < 2; i++) {
    const p = await readyParticipant(study, aaa, opts);
    await randomiseParticipant({ study, site: aaa, participantId: p.id, actor: { userId: coordA.user.id, role: 'coordinator' } });
  }
  await readyParticipant(study, aaa, { ...opts, eligibility: { ...example('eligibility'), core_strands: 2, inc_core_suture: 'N', inc_core_suture_reason: 'two-strand repair' }, skip: ['consent', 'baseline', 'operation'] });
  const d = await readyParticipant(study, aaa, { ...opts, skip: ['eligibility', 'consent', 'baseline', 'operation'] });
  await setScreeningOutcome({ studyId: study.id, siteId: aaa.id, participantId: d.id, outcome: 'declined', reason: 'lives too far away', actor: { userId: coordA.user.id, role: 'coordinator' } });
  await readyParticipant(study, bbb, { ...opts, skip: ['eligibility', 'consent', 'baseline', 'operation'] });
});

describe('investigator dashboard', () => {
  it('counts match the hand-built scenario and nothing is broken down by arm', async () => {
    const c = new Client();
    await c.signIn(inv.email, TEST_PASSWORD);
    const r = await c.get(`/api/studies/${study.code}/dashboard`);
    expect(r.status).toBe(200);
    expect(r.body.recruitment).toEqual([
      { site: 'AAA', name: 'Alder Clinic', target: 10, screened: 4, eligible: 2, consented: 2, randomised: 2 },
      { site: 'BBB', name: 'Birch Clinic', target: 6, screened: 1, eligible: 0, consented: 0, randomised: 0 },
    ]);
    expect(r.body.totals).toEqual({ target: 16, screened: 5, eligible: 2, consented: 2, randomised: 2 });
    expect(r.body.exclusionReasons[0].n).toBe(1);
    expect(r.body.consort.assessed).toBe(5);
    expect(r.body.consort.excluded).toMatchObject({ total: 2, notMeetingCriteria: 1, declined: 1, other: 0 });
    expect(r.body.consort.randomised).toBe(2);
    expect(r.body.consort.groups).toHaveLength(1);
    expect(r.body.consort.groups[0]).toMatchObject({ allocated: 2 });
    // Two randomised today, none before: the projection uses the recent rate and its interval contains it.
    expect(r.body.projection.remaining).toBe(14);
    expect(r.body.projection.projected >= r.body.projection.projectedCI[0]).toBe(true);
    // Cumulative randomised per month against the planned line (target 16 over 18 months from October 2025).
    const chart = r.body.recruitmentChart as { month: string; randomised: number | null; planned: number | null }[];
    const thisMonth = new Date().toISOString().slice(0, 7);
    expect(chart[0]).toEqual({ month: '2025-10', randomised: 0, planned: 1 });
    expect(chart.find((m) => m.month === '2027-03')!.planned).toBe(16);
    expect(chart.find((m) => m.month === thisMonth)!.randomised).toBe(2);
    expect(chart.filter((m) => m.month > thisMonth).every((m) => m.randomised === null)).toBe(true);
    expect(chart.filter((m) => m.month < thisMonth).every((m) => m.randomised === 0)).toBe(true);
    for (const w of ARM_WORDS) expect(JSON.stringify(r.body)).not.toContain(w);
    expect(r.body.consortSvg.startsWith('<svg')).toBe(true);
  });

  it('the browser shows the dashboard and the CONSORT diagram (screenshots saved)', async () => {
    const browser: Browser = await launch();
    try {
      const page = await browser.newPage({ viewport: { width: 1280, height: 900 } });
      page.setDefaultTimeout(10_000);
      await page.goto(`${BASE}/signin`);
      await page.getByLabel('E-mail').fill(inv.email);
      await page.getByLabel('Password').fill(TEST_PASSWORD);
      await page.getByRole('button', { name: 'Sign in' }).click();
      await page.getByRole('heading', { name: 'Your studies' }).waitFor();
      await page.goto(`${BASE}/studies/${study.code}/dashboard`);
      await page.getByRole('heading', { name: 'Recruitment against target' }).waitFor();
      expect(await page.locator('main svg').count()).toBeGreaterThan(0);
      await page.getByText('Cumulative randomised per month (solid)').waitFor();
      expect(await page.locator('.recharts-line').count()).toBe(2);
      const html = await page.content();
      for (const w of ARM_WORDS) expect(html).not.toContain(w);
      await screenshot(page, 'investigator-dashboard');
      await page.locator('section[aria-labelledby="consort-h"] svg').first().screenshot({ path: `${process.env.TEST_OUTPUT_DIR ?? 'test-output'}/consort-flow.png` });
    } finally {
      await browser.close();
    }
  });
});

afterAll(() => undefined);

describe('blinding integrity', () => {
  it('counts correct guesses with a Wilson interval (8 of 10: WI-6 in the published check values, Newcombe 1998)', async () => {
    const { blindingIntegrity } = await import('@/lib/monitoring/dashboard');
    const allocBy = new Map<number, { arm: string }>();
    const records: { participantId: number; formKey: string; data: Record<string, unknown> }[] = [];
    for (let i = 1; i <= 11; i++) {
      const arm = i % 2 ? 'EPM' : 'EAM';
      allocBy.set(i, { arm });
      const right = arm === 'EPM' ? 'guess_passive' : 'guess_active';
      const wrong = arm === 'EPM' ? 'guess_active' : 'guess_passive';
      records.push({ participantId: i, formKey: 'follow_up', data: { guess_arm: i === 11 ? 'unknown' : i <= 8 ? right : wrong } });
    }
    const r = blindingIntegrity({ id: 1, config: {} }, records, allocBy);
    expect(r).toMatchObject({ guesses: 10, correct: 8, cannotTell: 1, proportion: 0.8 });
    expect(r.ci95![0]).toBeCloseTo(0.490162, 5);
    expect(r.ci95![1]).toBeCloseTo(0.943318, 5);
  });
});

describe('after the hard lock', () => {
  it('shows arms and blinding integrity to everyone, and only then', async () => {
    const { setLock } = await import('@/lib/lock');
    const { dashboard } = await import('@/lib/monitoring/dashboard');
    const { lockStudy, randomised } = await import('../lock/helpers');
    const { study: s, sites, users } = await lockStudy('DASHLOCK');
    for (let i = 0; i < 2; i++) await randomised(s, sites.AAA, users.coordinator.user.id);
    // An assessor's role is blinded in this study: before lock, pooled and no blinding integrity.
    const before = await dashboard(s, 'all', ['assessor']);
    expect(before).toMatchObject({ byArm: false, lockedForAnalysis: false, blindingIntegrity: null });
    expect(before.consort.groups).toHaveLength(1);
    const dm = { userId: users.dm1.user.id, role: 'data_manager' as const };
    await setLock({ studyId: s.id, siteId: null, level: 'soft', actor: dm });
    expect((await dashboard(s, 'all', ['assessor'])).byArm).toBe(false);
    await setLock({ studyId: s.id, siteId: null, level: 'hard', override: true, reason: 'dashboard check', actor: dm });
    const after = await dashboard(s, 'all', ['assessor']);
    expect(after).toMatchObject({ byArm: true, lockedForAnalysis: true });
    expect(after.blindingIntegrity).toMatchObject({ guesses: 0, correct: 0 });
    expect(after.consort.groups.map((g: { key: string }) => g.key).sort()).toEqual(['EAM', 'EPM']);
  });
});
