// Browser: the coordinator fills the baseline form, submits it, changes one item with a reason,
// and sees the change in the item's history (screenshot saved).
import { describe, it, expect, beforeAll, afterAll } from 'vitest';
import type { Browser } from 'playwright-core';
import { expectSaved, launch, screenshot, signInPage } from '../support/browser';
import { BASE, DEMO } from '../support/http';
import { demoStudy, siteOf, uniq } from '../support/factories';
import { recordScreening } from '@/lib/screening';
import { User } from '@/models';

describe('browser: baseline CRF', () => {
  let browser: Browser;
  let participantId: number;
  beforeAll(async () => {
    browser = await launch();
    const study = await demoStudy();
    const hhc = await siteOf(study.id, 'HHC');
    const u = await User.findOne({ where: { email: DEMO.coordinatorHHC } });
    participantId = (await recordScreening({ studyId: study.id, siteId: hhc.id, screeningNumber: uniq('B'), screeningDate: '2026-11-20', age: 34, sex: 'F', actor: { userId: u!.id, role: 'coordinator' } })).id;
  });
  afterAll(async () => {
    await browser?.close();
  });

  it('fills, submits, changes with a reason and shows the history', async () => {
    const page = await signInPage(browser, DEMO.coordinatorHHC);
    await page.goto(`${BASE}/studies/TEMPO-FT/sites/HHC/participants/${participantId}/forms/baseline`);
    await page.getByRole('heading', { name: 'Baseline' }).first().waitFor();
    // Nothing is pre-filled.
    expect(await page.getByLabel('Female').isChecked()).toBe(false);
    await page.getByLabel('Age (years)').fill('34');
    await page.getByLabel('Female').check();
    await page.getByLabel('Right', { exact: true }).check();
    await page.getByLabel('Main occupation').selectOption({ label: 'Office or desk work' });
    await page.getByLabel('Never smoked').check();
    await page.getByLabel('No', { exact: true }).check();
    await page.getByRole('button', { name: 'Submit form' }).click();
    await expectSaved(page);

    await page.locator('#root_AGE').fill('35');
    await page.getByRole('button', { name: 'Save change' }).click();
    // Without a reason the change is refused.
    await page.locator('main').getByRole('alert').filter({ hasText: 'choose a reason' }).waitFor();
    await page.locator('#reason-code').selectOption('transcription_error');
    await page.getByLabel('Details (optional)').fill('typed 34 in error');
    await page.getByRole('button', { name: 'Save change' }).click();
    await expectSaved(page);

    await page.getByRole('button', { name: 'History of Age (years)' }).click();
    const dialog = page.getByRole('dialog');
    await dialog.getByText('Transcription error: typed 34 in error').waitFor();
    const text = await dialog.textContent();
    expect(text).toContain('34');
    expect(text).toContain('35');
    expect(text).toContain('Cora Hallett');
    await screenshot(page, 'crf-baseline-history');
    await page.close();
  });
});
