// Cross-site request refusal: every state-changing route (POST, PUT, PATCH, DELETE found in app/api) answers 403 to a
// signed-in user when the browser says the request came from another site (a foreign Origin, or
// Sec-Fetch-Site: cross-site / same-site), and nothing is written; the same request from our own origin gets past the check.
import { describe, it, expect, beforeAll } from 'vitest';
import { BASE, Client, DEMO, signedIn } from '../support/http';
import { count, privDb } from '../support/db';
import { demoStudy, siteOf, uniq } from '../support/factories';
import { recordScreening } from '@/lib/screening';
import { coordinatorOf, example } from '../support/ready';
import { apiRoutes, fill, sweepStudy } from './routes';
import { TEST_PASSWORD } from '../support/factories';

const CROSS = 'Requests from other sites are refused.';
let admin: Client;
let coordinator: Client;
let values: Record<string, string>;
let participantId: number;

beforeAll(async () => {
  // Routes are swept as the administrator of a study of the test's own, so a route that let a request through
  // could only touch that study.
  const sweep = await sweepStudy();
  values = { ...sweep.values, nextauth: 'signout' };
  admin = await signedIn(sweep.admin.email, TEST_PASSWORD);
  const study = await demoStudy();
  const hhc = await siteOf(study.id, 'HHC');
  const coord = await coordinatorOf('HHC');
  participantId = (await recordScreening({ studyId: study.id, siteId: hhc.id, screeningNumber: uniq('CSRF'), screeningDate: '2026-11-20', age: 40, sex: 'F', actor: { userId: coord.id, role: 'coordinator' } })).id;
  coordinator = await signedIn(DEMO.coordinatorHHC);
});

const mutations = () => apiRoutes().flatMap((r) => r.methods.filter((m) => m !== 'GET').map((method) => ({ method, url: fill(r.pattern, values) })));

describe('cross-site requests', () => {
  const cases: [string, Record<string, string>][] = [
    ['a foreign Origin', { origin: 'https://evil.example' }],
    ['a look-alike Origin on another port', { origin: new URL(BASE).origin.replace(/:\d+$/, ':1') }],
    ['Sec-Fetch-Site: cross-site', { 'sec-fetch-site': 'cross-site' }],
    ['Sec-Fetch-Site: same-site (a sibling subdomain)', { 'sec-fetch-site': 'same-site' }],
  ];
  for (const [what, headers] of cases) {
    it(`are refused with 403 on every state-changing route (${what})`, async () => {
      const list = mutations();
      expect(list.length).toBeGreaterThan(20);
      const wrong: string[] = [];
      for (const m of list) {
        const r = await admin.json(m.method, m.url, {}, headers);
        if (r.status !== 403 || r.body?.error?.message !== CROSS) wrong.push(`${m.method} ${m.url}: ${r.status} ${JSON.stringify(r.body).slice(0, 120)}`);
      }
      expect(wrong).toEqual([]);
    });
  }

  it('pass the check from our own origin (the answer is whatever the route decides, never the cross-site refusal)', async () => {
    const wrong: string[] = [];
    for (const m of mutations()) {
      if (m.url.startsWith('/api/auth/')) continue; // next-auth wants a form body and its own token
      const r = await admin.json(m.method, m.url, {}, { origin: new URL(BASE).origin, 'sec-fetch-site': 'same-origin' });
      if (r.body?.error?.message === CROSS || r.status >= 500) wrong.push(`${m.method} ${m.url}: ${r.status}`);
    }
    expect(wrong).toEqual([]);
  });

  it('write nothing: a valid CRF save sent cross-site is refused and leaves no record or audit row', async () => {
    const url = `/api/studies/TEMPO-FT/sites/HHC/participants/${participantId}/forms/baseline`;
    const db = privDb();
    const before = { records: await count(db, 'crf_records', 'participant_id = ?', [participantId]), audit: await count(db, 'audit_events') };
    const body = { data: example('baseline'), intent: 'draft', baseVersion: null };
    const r = await coordinator.json('PUT', url, body, { origin: 'https://evil.example', 'sec-fetch-site': 'cross-site' });
    expect(r.status).toBe(403);
    expect(await count(db, 'crf_records', 'participant_id = ?', [participantId])).toBe(before.records);
    expect(await count(db, 'audit_events')).toBe(before.audit);
    // The same save from the app itself works.
    const ok = await coordinator.json('PUT', url, body, { origin: new URL(BASE).origin, 'sec-fetch-site': 'same-origin' });
    expect(ok.status).toBe(200);
    expect(await count(db, 'crf_records', 'participant_id = ?', [participantId])).toBe(before.records + 1);
  });

  it('a cross-site sign-out or sign-in post to next-auth is refused too', async () => {
    const c = await signedIn(DEMO.monitor);
    const csrf = await c.get<{ csrfToken: string }>('/api/auth/csrf');
    const res = await c.raw('/api/auth/signout', {
      method: 'POST',
      headers: { 'content-type': 'application/x-www-form-urlencoded', origin: 'https://evil.example', 'sec-fetch-site': 'cross-site' },
      body: new URLSearchParams({ csrfToken: csrf.body.csrfToken, json: 'true' }).toString(),
    });
    expect(res.status).toBe(403);
    expect((await c.get('/api/me')).status).toBe(200);
  });
});
