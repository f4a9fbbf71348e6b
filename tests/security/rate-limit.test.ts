// Sign-in rate limiting per client address (on top of the per-account lockout): 30 failed sign-ins from one address
// within 15 minutes and the next attempt, even with a right password, is answered 429 with a clear message and a
// Retry-After, written to the access log; other addresses are not affected; only the address the proxy saw counts
// (the last X-Forwarded-For entry); the limit lifts when the failures age out; the per-account lockout still applies.
import { describe, it, expect } from 'vitest';
import { randomInt } from 'node:crypto';
import { BASE, Client } from '../support/http';
import { makeUser, TEST_PASSWORD } from '../support/factories';
import { privDb, rows } from '../support/db';
import { AccessLog } from '@/models';
import { IP_FAILURE_LIMIT, IP_WINDOW_MINUTES } from '@/lib/auth/signin';
import { launch, screenshot } from '../support/browser';

// Documentation ranges (RFC 5737), one fresh address per test so runs and other tests never share a count.
const address = () => `198.51.${randomInt(0, 256)}.${randomInt(1, 255)}`;

async function signInFrom(c: Client, forwardedFor: string, email: string, password: string) {
  const csrf = await c.json<{ csrfToken: string }>('GET', '/api/auth/csrf');
  const res = await c.raw('/api/auth/callback/credentials', {
    method: 'POST',
    headers: { 'content-type': 'application/x-www-form-urlencoded', 'x-forwarded-for': forwardedFor },
    body: new URLSearchParams({ csrfToken: csrf.body.csrfToken, email, password, json: 'true' }).toString(),
  });
  const body = (await res.json().catch(() => ({}))) as { url?: string; error?: { code: string; message: string; retryAfterSeconds: number } };
  const error = new URL(body.url ?? BASE, BASE).searchParams.get('error');
  return { status: res.status, error, body, retryAfter: res.headers.get('retry-after'), signedIn: c.cookie('excursion.session') !== undefined };
}

async function failMany(ip: string, n: number) {
  for (let i = 0; i < n; i++) {
    const r = await signInFrom(new Client(), ip, `nobody-${i}-${Date.now()}@test.example`, 'wrong-password-x');
    expect(r.error, `failure ${i + 1}`).toBe('CredentialsSignin');
  }
}

describe('sign-in rate limit per client address', () => {
  it(`refuses with 429 after ${IP_FAILURE_LIMIT} failures in ${IP_WINDOW_MINUTES} minutes, even a right password, and logs it`, async () => {
    const ip = address();
    const { user, email } = await makeUser([{ role: 'monitor', site: null }]);
    await failMany(ip, IP_FAILURE_LIMIT);
    const c = new Client();
    const r = await signInFrom(c, ip, email, TEST_PASSWORD);
    expect(r.status).toBe(429);
    expect(r.error).toBe('rate_limited');
    expect(r.body.error?.code).toBe('rate_limited');
    expect(r.body.error?.message).toMatch(/^Too many failed sign-ins from your network address \(30 within 15 minutes\)\. Wait 1[45] minutes and try again/);
    expect(Number(r.retryAfter)).toBeGreaterThan(13 * 60);
    expect(Number(r.retryAfter)).toBeLessThanOrEqual(IP_WINDOW_MINUTES * 60);
    expect(r.signedIn).toBe(false);
    expect((await c.get('/api/me')).status).toBe(401);
    // The password was never checked: the account shows no sign-in and no failure.
    await user.reload();
    expect(user.lastLoginAt).toBeNull();
    expect(user.failedAttempts).toBe(0);
    const logged = await AccessLog.findAll({ where: { ip, event: 'signin_rate_limited' } });
    expect(logged).toHaveLength(1);
    expect(logged[0].email).toBe(email);
    expect(logged[0].detail).toMatchObject({ failures: IP_FAILURE_LIMIT, windowMinutes: IP_WINDOW_MINUTES });
    // Refusals are not failures: the count stays at the limit.
    expect(await AccessLog.count({ where: { ip, event: 'signin_failure' } })).toBe(IP_FAILURE_LIMIT);
  });

  it('leaves other addresses alone, and counts only the address the proxy appended', async () => {
    const ip = address();
    await failMany(ip, IP_FAILURE_LIMIT);
    const { email } = await makeUser([{ role: 'monitor', site: null }]);
    // A different client address signs in normally.
    expect((await signInFrom(new Client(), address(), email, TEST_PASSWORD)).signedIn).toBe(true);
    // A client cannot escape by prepending an address of its own choosing…
    expect((await signInFrom(new Client(), `203.0.113.9, ${ip}`, email, TEST_PASSWORD)).status).toBe(429);
    // …and an address that only appears as the client's own claim is not the one the proxy saw.
    expect((await signInFrom(new Client(), `${ip}, ${address()}`, email, TEST_PASSWORD)).signedIn).toBe(true);
  });

  it('lets the address in again once its failures are older than the window', async () => {
    const ip = address();
    const { email } = await makeUser([{ role: 'monitor', site: null }]);
    await failMany(ip, IP_FAILURE_LIMIT);
    expect((await signInFrom(new Client(), ip, email, TEST_PASSWORD)).status).toBe(429);
    // The window passes (the privileged test connection ages this address's rows; the app itself cannot update them).
    await privDb().query(`UPDATE access_log SET at = at - INTERVAL ${IP_WINDOW_MINUTES + 1} MINUTE WHERE ip = ?`, { replacements: [ip] });
    const r = await signInFrom(new Client(), ip, email, TEST_PASSWORD);
    expect(r.status).toBe(200);
    expect(r.signedIn).toBe(true);
  });

  it('keeps the per-account lockout: five failures from five addresses still lock the account', async () => {
    const { user, email } = await makeUser([{ role: 'monitor', site: null }]);
    const errors = [];
    for (let i = 0; i < 5; i++) errors.push((await signInFrom(new Client(), address(), email, `wrong-${i}`)).error);
    expect(errors).toEqual(['CredentialsSignin', 'CredentialsSignin', 'CredentialsSignin', 'CredentialsSignin', 'locked']);
    expect((await signInFrom(new Client(), address(), email, TEST_PASSWORD)).error).toBe('locked');
    await user.reload();
    expect(user.lockedUntil!.getTime()).toBeGreaterThan(Date.now());
    const seen = await rows<{ ip: string }>(privDb(), "SELECT DISTINCT ip FROM access_log WHERE user_id = ? AND event = 'signin_failure'", [user.id]);
    expect(seen).toHaveLength(5);
  });

  it('shows the person at the sign-in page a clear message instead of a wrong-password one', async () => {
    const ip = address();
    const { email } = await makeUser([{ role: 'monitor', site: null }]);
    await failMany(ip, IP_FAILURE_LIMIT);
    const browser = await launch();
    try {
      // The browser's requests arrive as if through the proxy, from the limited address.
      const page = await browser.newPage({ viewport: { width: 1280, height: 900 }, extraHTTPHeaders: { 'x-forwarded-for': ip } });
      page.setDefaultTimeout(10_000);
      await page.goto(`${BASE}/signin`);
      await page.getByLabel('E-mail').fill(email);
      await page.getByLabel('Password').fill(TEST_PASSWORD);
      await page.getByRole('button', { name: 'Sign in' }).click();
      const alert = page.locator('form [role=alert]');
      await alert.waitFor();
      expect(await alert.textContent()).toBe('Too many failed sign-ins from your network address. Wait up to 15 minutes and try again, or ask your administrator.');
      expect(new URL(page.url()).pathname).toBe('/signin');
      await screenshot(page, 'signin-rate-limited');
    } finally {
      await browser.close();
    }
  });
});
