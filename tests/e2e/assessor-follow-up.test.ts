// Browser: the assessor opens the worklist, enters a week-12 assessment and sees TAM %, grade and QuickDASH
// calculated by the server (screenshot saved).
import { describe, it, expect, beforeAll, afterAll } from 'vitest';
import type { Browser } from 'playwright-core';
import { expectSaved, launch, screenshot, signInPage } from '../support/browser';
import { BASE, DEMO } from '../support/http';
import { demoStudy, siteOf } from '../support/factories';
import { coordinatorOf, ensureActivated, example, readyParticipant } from '../support/ready';
import { saveRecord } from '@/lib/crf/records';
import { randomiseParticipant } from '@/lib/allocation';

describe('browser: assessor follow-up', () => {
  let browser: Browser;
  let subjectCode = '';
  beforeAll(async () => {
    browser = await launch();
    const study = await demoStudy();
    await ensureActivated(study);
    const hhc = await siteOf(study.id, 'HHC');
    const coord = await coordinatorOf('HHC');
    const day = (n: number) => new Date(Date.now() - n * 86400000).toISOString().slice(0, 10);
    const p = await readyParticipant(study, hhc, { skip: ['operation'] });
    await saveRecord({ study, siteId: hhc.id, participantId: p.id, formKey: 'operation', data: { ...example('operation'), INJDAT: day(83), REPDAT: day(82) }, intent: 'submit', baseVersion: null, actor: { userId: coord.id, roles: ['coordinator'] }, today: day(0) });
    subjectCode = (await randomiseParticipant({ study, site: hhc, participantId: p.id, actor: { userId: coord.id, role: 'coordinator' } })).subjectCode;
  });
  afterAll(async () => {
    await browser?.close();
  });

  it('enters week 12 from the worklist and sees the derived scores', async () => {
    const page = await signInPage(browser, DEMO.assessorHHC);
    await page.getByRole('link', { name: 'Visits due' }).first().click();
    await page.getByRole('heading', { name: 'Visits due' }).waitFor();
    // A site-limited assessor's study-level page names their site, never "all sites".
    expect(await page.getByRole('navigation', { name: 'Current study' }).textContent()).toContain('Site HHC');
    await page.getByRole('link', { name: `assessment: Week 12 (primary) for ${subjectCode}` }).click();
    await page.getByRole('heading', { name: 'Follow-up assessment' }).waitFor();
    await page.getByLabel('Visit date').fill(new Date().toISOString().slice(0, 10));
    const joints: [string, number][] = [['MCP flex', 80], ['PIP flex', 75], ['DIP flex', 40], ['MCP ext. deficit', 0], ['PIP ext. deficit', 15], ['DIP ext. deficit', 10]];
    for (const [j, v] of joints) await page.getByLabel(`right middle ${j} (degrees)`).fill(String(v));
    const other: [string, number][] = [['MCP flex', 90], ['PIP flex', 100], ['DIP flex', 70], ['MCP ext. deficit', 0], ['PIP ext. deficit', 0], ['DIP ext. deficit', 0]];
    for (const [j, v] of other) await page.getByLabel(`left middle ${j} (degrees)`).fill(String(v));
    await screenshot(page, 'assessor-week12-form');
    const groups = page.getByRole('group', { name: 'QuickDASH' }).getByRole('radiogroup');
    expect(await groups.count()).toBe(11);
    const answers = [2, 3, 2, 1, 2, 3, 2, 2, 2, 1, 1];
    for (let i = 0; i < 11; i++) await groups.nth(i).getByRole('radio').nth(answers[i] - 1).check();
    await page.getByLabel(/^Pain now/).fill('2');
    await page.getByLabel('Cannot tell').check();
    await page.getByRole('button', { name: 'Submit form' }).click();
    await expectSaved(page);
    const panel = page.getByRole('region', { name: /Calculated by Excursion/ });
    await panel.waitFor();
    const text = (await panel.textContent()) ?? '';
    // TAM 170° against 260° on the other hand: 65.4 %, fair. QuickDASH (21/11 − 1) × 25 = 22.7.
    expect(text).toContain('170');
    expect(text).toContain('65.4');
    expect(text).toContain('fair');
    expect(text).toContain('22.7');
    await screenshot(page, 'assessor-week12');
    await page.close();
  });
});
