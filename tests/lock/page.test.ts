// Browser: the data manager's lock page. One data manager soft-locks a site from the page and asks for the unlock;
// the page offers that person no approval; a second data manager approves it there. Screenshots saved.
import { describe, it, expect, beforeAll, afterAll } from 'vitest';
import type { Browser } from 'playwright-core';
import { launch, screenshot, signInPage } from '../support/browser';
import { BASE } from '../support/http';
import { TEST_PASSWORD } from '../support/factories';
import { lockState } from '@/lib/lock';
import { lockStudy, randomised } from './helpers';

describe('browser: database lock page', () => {
  let browser: Browser;
  let s: Awaited<ReturnType<typeof lockStudy>>;
  beforeAll(async () => {
    browser = await launch();
    s = await lockStudy('LOCKP');
    await randomised(s.study, s.sites.AAA, s.users.coordinator.user.id);
  });
  afterAll(async () => {
    await browser?.close();
  });

  it('soft-locks a site, asks for the unlock, and a second data manager approves it', async () => {
    const page = await signInPage(browser, s.users.dm1.email, TEST_PASSWORD);
    page.on('dialog', (d) => void d.accept());
    await page.goto(`${BASE}/studies/${s.study.code}`);
    await page.getByRole('link', { name: 'Database lock' }).click();
    await page.getByRole('heading', { name: 'Database lock', level: 1 }).waitFor();
    await page.getByLabel('Applies to').selectOption('AAA');
    await page.getByText('Before a hard lock of site AAA').waitFor();
    const html = await page.content();
    expect(html).toContain('Required visits not done');
    await page.getByRole('button', { name: 'Soft-lock site AAA' }).click();
    await page.getByText('Soft lock set for site AAA.').waitFor();
    expect((await lockState(s.study.id, s.sites.AAA.id)).level).toBe('soft');
    await page.getByRole('button', { name: 'Hard-lock site AAA' }).waitFor();
    await screenshot(page, 'lock-page-soft');
    await page.getByLabel(/^Reason/).fill('a source correction is due at Alder');
    await page.getByRole('button', { name: /Ask to unlock site AAA/ }).click();
    await page.getByText('a different data manager must approve it').waitFor();
    const pending = page.getByRole('region', { name: 'Unlock requests waiting for approval' });
    await pending.getByText('a source correction is due at Alder').waitFor();
    expect(await pending.getByRole('button', { name: 'Approve' }).count()).toBe(0);
    await page.close();

    const other = await signInPage(browser, s.users.dm2.email, TEST_PASSWORD);
    other.on('dialog', (d) => void d.accept());
    await other.goto(`${BASE}/studies/${s.study.code}/lock`);
    const region = other.getByRole('region', { name: 'Unlock requests waiting for approval' });
    await region.getByRole('button', { name: 'Approve' }).click();
    await other.getByText('Unlock approved: site AAA is now open.').waitFor();
    await other.getByRole('region', { name: 'History' }).getByText('Unlock approved').waitFor();
    await screenshot(other, 'lock-page-history');
    expect((await lockState(s.study.id, s.sites.AAA.id)).level).toBe('open');
    await other.close();
  });
});
