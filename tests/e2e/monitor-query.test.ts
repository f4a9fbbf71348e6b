// Browser: the monitor opens a query from an item's history panel and closes it (screenshot saved).
import { describe, it, expect, beforeAll, afterAll } from 'vitest';
import type { Browser } from 'playwright-core';
import { launch, screenshot, signInPage } from '../support/browser';
import { BASE, DEMO } from '../support/http';
import { demoStudy, siteOf } from '../support/factories';
import { readyParticipant } from '../support/ready';
import { Query } from '@/models';

describe('browser: monitor query', () => {
  let browser: Browser;
  let participantId = 0;
  let screeningNumber = '';
  beforeAll(async () => {
    browser = await launch();
    const study = await demoStudy();
    const p = await readyParticipant(study, await siteOf(study.id, 'HHC'), { skip: ['eligibility', 'consent', 'operation'] });
    participantId = p.id;
    screeningNumber = p.screeningNumber;
  });
  afterAll(async () => {
    await browser?.close();
  });

  it('opens a query on an item and closes it', async () => {
    const page = await signInPage(browser, DEMO.monitor);
    await page.goto(`${BASE}/studies/TEMPO-FT/sites/HHC/participants/${participantId}/forms/baseline`);
    await page.getByRole('button', { name: 'History of Age (years)' }).click();
    await page.getByLabel('Query text, or a closing note').fill('The source notes give a different age; please check.');
    await page.getByRole('button', { name: 'Open a query' }).click();
    await page.getByText('Query opened; the site has been e-mailed.').waitFor();
    await page.getByRole('dialog').getByText('The source notes give a different age').waitFor();
    await screenshot(page, 'monitor-query-open');
    await page.getByRole('button', { name: 'Close', exact: true }).nth(1).click();
    await page.getByText('Query closed.').waitFor();
    const q = await Query.findOne({ where: { participantId, itemPath: '/AGE' } });
    expect(q!.state).toBe('closed');
    // The monitor has no way to change the value: the form is read-only for this role.
    expect(await page.getByRole('button', { name: 'Save change' }).count()).toBe(0);
    // The site's query list names the participant and the form; its link opens the record the query is on.
    await page.goto(`${BASE}/studies/TEMPO-FT/sites/HHC/queries`);
    await page.getByLabel('State').selectOption('closed');
    await page.getByLabel('Form key').fill('baseline');
    const row = page.getByRole('row').filter({ hasText: 'The source notes give a different age' });
    await row.waitFor();
    expect(await row.textContent()).toContain(screeningNumber);
    await row.getByRole('link', { name: 'Baseline' }).click();
    await page.getByRole('heading', { name: 'Baseline' }).waitFor();
    expect(page.url()).toContain(`/participants/${participantId}/forms/baseline`);
    await page.close();
  });
});
