// Browser: the coordinator screens a patient, records consent with an uploaded PDF, randomises and sees the
// allocation; the assessor's participant list then shows no arm (screenshots saved).
import { describe, it, expect, beforeAll, afterAll } from 'vitest';
import type { Browser } from 'playwright-core';
import { expectSaved, launch, screenshot, signInPage } from '../support/browser';
import { BASE, DEMO } from '../support/http';
import { demoStudy, siteOf, uniq } from '../support/factories';
import { coordinatorOf, ensureActivated, example, PDF } from '../support/ready';
import { saveRecord } from '@/lib/crf/records';
import { Participant } from '@/models';

describe('browser: screening to randomisation', () => {
  let browser: Browser;
  beforeAll(async () => {
    browser = await launch();
    await ensureActivated(await demoStudy());
  });
  afterAll(async () => {
    await browser?.close();
  });

  it('screens, consents with an upload, randomises; the assessor sees no arm', async () => {
    const study = await demoStudy();
    const hhc = await siteOf(study.id, 'HHC');
    const sn = uniq('E2E');
    const page = await signInPage(browser, DEMO.coordinatorHHC);
    await page.goto(`${BASE}/studies/TEMPO-FT/sites/HHC/screening`);
    await page.getByLabel('Screening number').fill(sn);
    await page.getByLabel('Screening date').fill('2026-11-28');
    await page.getByLabel('Age (years)').fill('29');
    await page.getByLabel('Sex').selectOption('M');
    await page.getByRole('button', { name: 'Add to log' }).click();
    await page.locator('main').getByRole('status').filter({ hasText: sn }).waitFor();
    const p = (await Participant.findOne({ where: { screeningNumber: sn, siteId: hhc.id } }))!;

    // Eligibility, baseline and operation are entered the same way as the baseline browser test shows.
    const coord = await coordinatorOf('HHC');
    for (const form of ['eligibility', 'baseline', 'operation']) {
      await saveRecord({ study, siteId: hhc.id, participantId: p.id, formKey: form, data: example(form), intent: 'submit', baseVersion: null, actor: { userId: coord.id, roles: ['coordinator'] }, today: '2026-12-02' });
    }

    await page.goto(`${BASE}/studies/TEMPO-FT/sites/HHC/participants/${p.id}/forms/consent`);
    await page.getByLabel('Consent form version').fill('v2.1 2026-05-01');
    await page.getByLabel('Date of consent').fill('2026-11-28');
    await page.getByLabel('Consent taken by').fill('C. Hallett, research coordinator');
    await page.locator('input[type=file]').setInputFiles({ name: 'signed-consent.pdf', mimeType: 'application/pdf', buffer: PDF });
    await page.getByText(/Stored as /).waitFor();
    await page.getByRole('button', { name: 'Submit form' }).click();
    await expectSaved(page);

    await page.goto(`${BASE}/studies/TEMPO-FT/sites/HHC/participants/${p.id}`);
    await page.getByText(/status eligible, not yet randomised/).waitFor();
    await page.getByRole('button', { name: /^Randomise / }).click();
    await page.getByText('Please confirm before the allocation is revealed').waitFor();
    await page.getByRole('button', { name: 'Confirm and randomise' }).click();
    await page.getByRole('heading', { name: 'Randomised' }).waitFor();
    const shown = await page.locator('main').textContent();
    expect(shown).toMatch(/Early (passive|active) motion \((EPM|EAM)\)/);
    expect(shown).toMatch(/TEMPO-HHC-\d{3}/);
    await screenshot(page, 'coordinator-randomised');
    await page.close();

    const a = await signInPage(browser, DEMO.assessorHHC);
    await a.goto(`${BASE}/studies/TEMPO-FT/sites/HHC/participants`);
    await a.getByRole('cell', { name: sn }).waitFor();
    // The status is shown in words, not as its stored code.
    const row = a.getByRole('row').filter({ has: a.getByRole('cell', { name: sn }) });
    expect(await row.getByRole('cell', { name: 'randomised', exact: true }).count()).toBe(1);
    const html = await a.content();
    for (const w of ['EPM', 'EAM', 'Early passive motion', 'Early active motion']) expect(html).not.toContain(w);
    expect(await a.getByRole('columnheader', { name: 'Arm' }).count()).toBe(0);
    await screenshot(a, 'assessor-participants');
    await a.close();
  });
});
