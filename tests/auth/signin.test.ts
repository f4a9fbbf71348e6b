// Sign-in through next-auth's credentials endpoint: success, failure, lockout after 5 failures,
// unlock after the 15-minute window, and the access log row for each outcome.
import { describe, it, expect } from 'vitest';
import { Client } from '../support/http';
import { makeUser, TEST_PASSWORD } from '../support/factories';
import { AccessLog, User } from '@/models';

const events = async (userId: number) => (await AccessLog.findAll({ where: { userId }, order: [['id', 'ASC']] })).map((r) => r.event);

describe('sign-in', () => {
  it('succeeds with the right password and records signin_success', async () => {
    const { user, email } = await makeUser([{ role: 'coordinator', site: 'HHC' }]);
    const c = new Client();
    const r = await c.signIn(email, TEST_PASSWORD);
    expect(r).toEqual({ ok: true, error: null });
    const me = await c.get('/api/me');
    expect(me.status).toBe(200);
    expect(me.body.email).toBe(email);
    expect(await events(user.id)).toEqual(['signin_success']);
  });

  it('fails with a wrong password, sets no session and records signin_failure', async () => {
    const { user, email } = await makeUser([{ role: 'coordinator', site: 'HHC' }]);
    const c = new Client();
    const r = await c.signIn(email, 'not-the-password-at-all');
    expect(r.ok).toBe(false);
    expect(r.error).toBe('CredentialsSignin');
    expect((await c.get('/api/me')).status).toBe(401);
    expect(await events(user.id)).toEqual(['signin_failure']);
  });

  it('answers an unknown account like a wrong password and logs the attempt by e-mail', async () => {
    const c = new Client();
    const email = `nobody-${Date.now()}@test.example`;
    const r = await c.signIn(email, 'whatever-password-1');
    expect(r.error).toBe('CredentialsSignin');
    expect(await AccessLog.count({ where: { email, event: 'signin_failure' } })).toBe(1);
  });

  it('locks after 5 failures, refuses even the right password, and unlocks after the window', async () => {
    const { user, email } = await makeUser([{ role: 'coordinator', site: 'HHC' }]);
    const c = new Client();
    for (let i = 1; i <= 4; i++) expect((await c.signIn(email, `wrong-password-${i}`)).error).toBe('CredentialsSignin');
    expect((await c.signIn(email, 'wrong-password-5')).error).toBe('locked');
    await user.reload();
    expect(user.lockedUntil!.getTime()).toBeGreaterThan(Date.now() + 14 * 60_000);
    expect(user.lockedUntil!.getTime()).toBeLessThanOrEqual(Date.now() + 15 * 60_000 + 1000);
    expect((await c.signIn(email, TEST_PASSWORD)).error).toBe('locked');
    // The 15-minute window passes.
    await User.update({ lockedUntil: new Date(Date.now() - 1000) }, { where: { id: user.id } });
    expect((await c.signIn(email, TEST_PASSWORD)).ok).toBe(true);
    await user.reload();
    expect(user.failedAttempts).toBe(0);
    expect(user.lockedUntil).toBeNull();
    expect(await events(user.id)).toEqual([
      'signin_failure', 'signin_failure', 'signin_failure', 'signin_failure', 'signin_failure', 'lockout', 'signin_refused_locked', 'signin_success',
    ]);
  });

  it('refuses a deactivated account and ends its open session on the next request', async () => {
    const { user, email } = await makeUser([{ role: 'monitor', site: null }]);
    const c = new Client();
    expect((await c.signIn(email, TEST_PASSWORD)).ok).toBe(true);
    expect((await c.get('/api/me')).status).toBe(200);
    await User.update({ status: 'deactivated' }, { where: { id: user.id } });
    expect((await c.get('/api/me')).status).toBe(401);
    expect((await new Client().signIn(email, TEST_PASSWORD)).ok).toBe(false);
  });

  it('records sign-out in the access log and the session no longer works', async () => {
    const { user, email } = await makeUser([{ role: 'monitor', site: null }]);
    const c = new Client();
    await c.signIn(email, TEST_PASSWORD);
    const token = c.cookie('excursion.session');
    const csrf = await c.get<{ csrfToken: string }>('/api/auth/csrf');
    const res = await c.raw('/api/auth/signout', {
      method: 'POST',
      headers: { 'content-type': 'application/x-www-form-urlencoded' },
      body: new URLSearchParams({ csrfToken: csrf.body.csrfToken, json: 'true' }).toString(),
    });
    expect(res.status).toBe(200);
    expect(c.cookie('excursion.session')).toBeUndefined();
    expect(token).toBeTruthy();
    expect(await events(user.id)).toEqual(['signin_success', 'signout']);
  });

  it('sets the session cookie HttpOnly and SameSite=Lax, carrying no roles', async () => {
    const { email } = await makeUser([{ role: 'monitor', site: null }]);
    const c = new Client();
    const csrf = await c.get<{ csrfToken: string }>('/api/auth/csrf');
    const res = await c.raw('/api/auth/callback/credentials', {
      method: 'POST',
      headers: { 'content-type': 'application/x-www-form-urlencoded' },
      body: new URLSearchParams({ csrfToken: csrf.body.csrfToken, email, password: TEST_PASSWORD, json: 'true' }).toString(),
    });
    const cookie = res.headers.getSetCookie().find((h) => h.startsWith('excursion.session='))!;
    expect(cookie).toMatch(/HttpOnly/i);
    expect(cookie).toMatch(/SameSite=Lax/i);
    // The session lasts 30 minutes from the last activity.
    const expires = new Date(/Expires=([^;]+)/i.exec(cookie)![1]).getTime();
    expect(Math.abs(expires - (Date.now() + 30 * 60_000))).toBeLessThan(60_000);
  });
});
