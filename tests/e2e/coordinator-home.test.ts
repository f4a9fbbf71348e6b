// Browser: the coordinator signs in through the real form and sees their home page (screenshot saved).
import { describe, it, expect, beforeAll, afterAll } from 'vitest';
import { existsSync, statSync } from 'node:fs';
import type { Browser } from 'playwright-core';
import { launch, screenshot, signInPage } from '../support/browser';
import { BASE, DEMO } from '../support/http';

describe('browser: coordinator home', () => {
  let browser: Browser;
  beforeAll(async () => {
    browser = await launch();
  });
  afterAll(async () => {
    await browser?.close();
  });

  it('signs in and shows the coordinator’s site and role', async () => {
    const page = await signInPage(browser, DEMO.coordinatorHHC);
    await expect(page.getByText('HHC · Harbourside Hand Centre')).toBeTruthy();
    const body = await page.textContent('main');
    expect(body).toContain('Site coordinator');
    expect(body).not.toContain('Millbrook');
    expect(await page.textContent('footer')).toContain('not a medical device');
    const file = await screenshot(page, 'coordinator-home');
    expect(existsSync(file) && statSync(file).size > 10_000).toBe(true);
    await page.close();
  });

  it('shows a clear message for a wrong password', async () => {
    const page = await browser.newPage();
    await page.goto(`${BASE}/signin`);
    await page.getByLabel('E-mail').fill(DEMO.monitor);
    await page.getByLabel('Password').fill('definitely-wrong-pw');
    await page.getByRole('button', { name: 'Sign in' }).click();
    // Scoped to main: Next's route announcer is an alert region too.
    const alert = page.locator('main').getByRole('alert');
    await alert.waitFor();
    expect(await alert.textContent()).toContain('not right');
    await page.close();
  });

  it('the admin invites a person from the users page', async () => {
    const page = await signInPage(browser, DEMO.admin);
    await page.goto(`${BASE}/studies/TEMPO-FT/admin/users`);
    await page.getByRole('heading', { name: 'People in TEMPO-FT' }).waitFor();
    await page.getByLabel('Name', { exact: true }).fill('Rhea Browser');
    await page.getByLabel('E-mail', { exact: true }).fill(`rhea-${Date.now()}@test.example`);
    await page.locator('#inv-role').selectOption('assessor');
    await page.locator('#inv-site').selectOption('KVH');
    await page.getByRole('button', { name: 'Send invitation' }).click();
    await page.locator('main').getByRole('status').filter({ hasText: 'Invitation sent' }).waitFor();
    await page.getByRole('cell', { name: 'Rhea Browser', exact: true }).waitFor();
    await screenshot(page, 'admin-users');
    await page.close();
  });
});
