// Cookie attributes: the session cookie (set at sign-in and slid on every API call) and next-auth's own cookies are
// HttpOnly, SameSite=Lax or Strict, Path=/, without a Domain; over https (NEXTAUTH_URL https://…) they are Secure
// and the session cookie takes the __Secure- prefix.
import { describe, it, expect, afterEach } from 'vitest';
import { BASE, Client } from '../support/http';
import { makeUser, TEST_PASSWORD } from '../support/factories';
import { sessionCookieName, sessionCookieOptions } from '@/lib/auth/session';
import { authOptions } from '@/lib/auth/options';

type Parsed = { name: string; attrs: Map<string, string> };
const parse = (c: string): Parsed => {
  const [pair, ...rest] = c.split(';');
  return { name: pair.slice(0, pair.indexOf('=')).trim(), attrs: new Map(rest.map((a) => a.trim().split('=')).map(([k, v]) => [k.toLowerCase(), v ?? ''])) };
};

function checkCookie(c: Parsed, secure: boolean) {
  expect(c.attrs.has('httponly'), `${c.name} HttpOnly`).toBe(true);
  expect(['lax', 'strict'], `${c.name} SameSite`).toContain((c.attrs.get('samesite') ?? '').toLowerCase());
  expect(c.attrs.get('path'), `${c.name} Path`).toBe('/');
  expect(c.attrs.has('domain'), `${c.name} has no Domain`).toBe(false);
  expect(c.attrs.has('secure'), `${c.name} Secure`).toBe(secure);
}

const savedUrl = process.env.NEXTAUTH_URL;
afterEach(() => {
  process.env.NEXTAUTH_URL = savedUrl;
});

describe('cookies', () => {
  it('the session cookie from sign-in and from a sliding API call is HttpOnly, SameSite, Path=/ (not Secure over http)', async () => {
    const { email } = await makeUser([{ role: 'monitor', site: null }]);
    const csrfRes = await fetch(`${BASE}/api/auth/csrf`);
    const csrfCookies = csrfRes.headers.getSetCookie().map(parse);
    const { csrfToken } = (await csrfRes.json()) as { csrfToken: string };
    expect(csrfCookies.length).toBeGreaterThan(0);
    for (const c of csrfCookies) checkCookie(c, false);

    const res = await fetch(`${BASE}/api/auth/callback/credentials`, {
      method: 'POST',
      redirect: 'manual',
      headers: { 'content-type': 'application/x-www-form-urlencoded', cookie: csrfRes.headers.getSetCookie().map((c) => c.split(';')[0]).join('; ') },
      body: new URLSearchParams({ csrfToken, email, password: TEST_PASSWORD, json: 'true' }).toString(),
    });
    const set = res.headers.getSetCookie().map(parse);
    const session = set.find((c) => c.name === 'excursion.session');
    expect(session, 'sign-in sets the session cookie').toBeTruthy();
    for (const c of set) checkCookie(c, false);

    const c = new Client();
    expect((await c.signIn(email, TEST_PASSWORD)).ok).toBe(true);
    const me = await c.raw('/api/me');
    expect(me.status).toBe(200);
    const slid = me.headers.getSetCookie().map(parse).find((x) => x.name === 'excursion.session');
    expect(slid, 'an API call slides the session cookie').toBeTruthy();
    checkCookie(slid!, false);
    // The idle window is the cookie's lifetime.
    expect(Number(slid!.attrs.get('max-age'))).toBe(30 * 60);
  });

  it('are Secure, and the session cookie is __Secure-prefixed, when the public address is https', () => {
    process.env.NEXTAUTH_URL = 'https://trial.example.org';
    expect(sessionCookieName()).toBe('__Secure-excursion.session');
    expect(sessionCookieOptions()).toMatchObject({ httpOnly: true, sameSite: 'lax', path: '/', secure: true });
    const o = authOptions();
    expect(o.cookies?.sessionToken?.name).toBe('__Secure-excursion.session');
    expect(o.cookies?.sessionToken?.options).toMatchObject({ httpOnly: true, sameSite: 'lax', path: '/', secure: true });
    process.env.NEXTAUTH_URL = 'http://127.0.0.1:3000';
    expect(sessionCookieName()).toBe('excursion.session');
    expect(sessionCookieOptions().secure).toBe(false);
  });
});
