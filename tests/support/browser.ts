// Browser tests drive Debian's Chromium with playwright-core (never a downloaded browser).
import { chromium, type Browser, type Page } from 'playwright-core';
import { mkdirSync } from 'node:fs';
import path from 'node:path';
import { BASE, DEMO_PASSWORD } from './http';

export const OUTPUT = process.env.TEST_OUTPUT_DIR ?? path.resolve('test-output');

export async function launch(): Promise<Browser> {
  return chromium.launch({
    executablePath: '/usr/bin/chromium',
    args: ['--no-sandbox', '--disable-gpu', '--disable-background-networking', '--disable-component-update', '--disable-sync', '--disable-quic', '--no-first-run'],
  });
}

export async function signInPage(browser: Browser, email: string, password = DEMO_PASSWORD): Promise<Page> {
  const page = await browser.newPage({ viewport: { width: 1280, height: 900 } });
  page.setDefaultTimeout(10_000);
  await page.goto(`${BASE}/signin`);
  await page.getByLabel('E-mail').fill(email);
  await page.getByLabel('Password').fill(password);
  await page.getByRole('button', { name: 'Sign in' }).click();
  await page.getByRole('heading', { name: 'Your studies' }).waitFor();
  return page;
}

export async function screenshot(page: Page, name: string): Promise<string> {
  mkdirSync(OUTPUT, { recursive: true });
  const file = path.join(OUTPUT, `${name}.png`);
  await page.screenshot({ path: file, fullPage: true });
  return file;
}

/** Waits for a status text; when the page shows an error instead, fails with that error's text. */
export async function expectSaved(page: Page, text = 'Saved and submitted.') {
  const ok = page.getByText(text);
  const err = page.locator('main .notice-error');
  await Promise.race([ok.waitFor(), err.waitFor()]);
  if (await err.isVisible()) throw new Error(`the page shows an error: ${await err.textContent()}`);
}
