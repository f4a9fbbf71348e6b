// Security headers on every answer: each page (signed in and not), each API route and method (with and without a
// session, including error answers), the 404 page and static assets carry a CSP with frame-ancestors 'none',
// X-Content-Type-Options: nosniff and a Referrer-Policy.
import { describe, it, expect, beforeAll } from 'vitest';
import { Client, DEMO, signedIn } from '../support/http';
import { demoStudy, siteOf, uniq, TEST_PASSWORD } from '../support/factories';
import { recordScreening } from '@/lib/screening';
import { coordinatorOf } from '../support/ready';
import { apiRoutes, fill, pages, sweepStudy } from './routes';

const REFERRER = new Set(['no-referrer', 'same-origin', 'strict-origin', 'strict-origin-when-cross-origin']);

function problems(where: string, h: Headers): string[] {
  const out: string[] = [];
  const csp = h.get('content-security-policy') ?? '';
  if (!/(^|;)\s*frame-ancestors 'none'\s*(;|$)/.test(csp)) out.push(`${where}: CSP without frame-ancestors 'none' (${csp || 'no CSP'})`);
  if (!/(^|;)\s*default-src 'self'/.test(csp)) out.push(`${where}: CSP without default-src 'self'`);
  if (h.get('x-content-type-options') !== 'nosniff') out.push(`${where}: X-Content-Type-Options is ${h.get('x-content-type-options')}`);
  if (!REFERRER.has(h.get('referrer-policy') ?? '')) out.push(`${where}: Referrer-Policy is ${h.get('referrer-policy')}`);
  return out;
}

let values: Record<string, string>;
let demoValues: Record<string, string>;
let admin: Client;
let demoAdmin: Client;

beforeAll(async () => {
  // Pages and API routes are swept on a study of the test's own (empty bodies must not touch the demo study).
  const sweep = await sweepStudy();
  values = { ...sweep.values, nextauth: 'session' };
  admin = await signedIn(sweep.admin.email, TEST_PASSWORD);
  const study = await demoStudy();
  const hhc = await siteOf(study.id, 'HHC');
  const coord = await coordinatorOf('HHC');
  const p = await recordScreening({ studyId: study.id, siteId: hhc.id, screeningNumber: uniq('HDR'), screeningDate: '2026-11-20', age: 40, sex: 'F', actor: { userId: coord.id, role: 'coordinator' } });
  demoValues = { study: 'TEMPO-FT', site: 'HHC', participant: String(p.id), form: 'baseline' };
  demoAdmin = await signedIn(DEMO.dataManager);
});

describe('security headers', () => {
  it('are on every page, signed in and signed out (redirects included)', async () => {
    const found: string[] = [];
    const list = pages();
    expect(list.length).toBeGreaterThan(10);
    for (const pattern of list) {
      const url = fill(pattern, values);
      for (const [who, c] of [['signed out', new Client()], ['admin', admin]] as const) {
        const res = await c.raw(url, { headers: { accept: 'text/html' } });
        await res.arrayBuffer();
        expect(res.status, `${who} ${url}`).toBeLessThan(500);
        found.push(...problems(`${who} GET ${url} (${res.status})`, res.headers));
      }
    }
    expect(found).toEqual([]);
  });

  it('are on every API answer, for each method, with and without a session', async () => {
    const found: string[] = [];
    let checked = 0;
    for (const r of apiRoutes()) {
      const url = fill(r.pattern, values);
      for (const method of r.methods) {
        for (const [who, c] of [['signed out', new Client()], ['admin', admin]] as const) {
          // Mutations are sent with an empty JSON body: the answers (400/401/403/404) must carry the headers too.
          const res = await c.raw(url, method === 'GET' ? {} : { method, headers: { 'content-type': 'application/json' }, body: '{}' });
          await res.arrayBuffer();
          expect(res.status, `${who} ${method} ${url}`).not.toBe(500);
          found.push(...problems(`${who} ${method} ${url} (${res.status})`, res.headers));
          checked++;
        }
      }
    }
    expect(checked).toBeGreaterThan(60);
    expect(found).toEqual([]);
  });

  it('are on the not-found page, an unknown API path and static assets', async () => {
    const c = new Client();
    const html = await (await c.raw('/signin')).text();
    const asset = html.match(/\/_next\/static\/[^"']+\.js/)?.[0];
    expect(asset).toBeTruthy();
    const found: string[] = [];
    for (const url of ['/no-such-page', '/api/no-such-route', asset!]) {
      const res = await c.raw(url);
      await res.arrayBuffer();
      found.push(...problems(`GET ${url} (${res.status})`, res.headers));
    }
    expect(found).toEqual([]);
  });

  it('forbid framing on the CRF page too, whose CSP alone allows eval', async () => {
    const url = fill('/studies/[study]/sites/[site]/participants/[participant]/forms/[form]', demoValues);
    const res = await demoAdmin.raw(url, { headers: { accept: 'text/html' } });
    await res.arrayBuffer();
    expect(res.status).toBe(200);
    expect(res.headers.get('content-security-policy')).toContain("frame-ancestors 'none'");
    expect(res.headers.get('content-security-policy')).toContain("'unsafe-eval'");
    expect(res.headers.get('x-frame-options')).toBe('DENY');
    const other = await demoAdmin.raw(fill('/studies/[study]/sites/[site]/participants/[participant]', demoValues), { headers: { accept: 'text/html' } });
    await other.arrayBuffer();
    expect(other.headers.get('content-security-policy')).not.toContain("'unsafe-eval'");
  });
});
