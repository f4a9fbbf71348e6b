// The route-handler gate: 401 without a session, 403 without a membership for the role or the site
// in the URL, and a revoked membership loses access on the very next request.
import { describe, it, expect } from 'vitest';
import { Client, DEMO, signedIn } from '../support/http';
import { makeUser, TEST_PASSWORD, uniq } from '../support/factories';
import { Membership, Study } from '@/models';

describe('withAuth', () => {
  it('answers 401 with the error shape when there is no session', async () => {
    const r = await new Client().get('/api/studies/TEMPO-FT/sites');
    expect(r.status).toBe(401);
    expect(r.body.error.code).toBe('unauthenticated');
    expect(typeof r.body.error.message).toBe('string');
  });

  it('answers 401 for a forged session cookie', async () => {
    const r = await new Client().json('GET', '/api/me', undefined, { cookie: 'excursion.session=eyJhbGciOiJkaXIiLCJlbmMiOiJBMjU2R0NNIn0..forged.forged.forged' });
    expect(r.status).toBe(401);
  });

  it('answers 403 for a role that lacks the membership', async () => {
    const c = await signedIn(DEMO.coordinatorHHC);
    const r = await c.get('/api/studies/TEMPO-FT/users');
    expect(r.status).toBe(403);
    expect(r.body.error.code).toBe('forbidden');
  });

  it('answers 403 for a site that lacks the membership, 200 for the own site', async () => {
    const c = await signedIn(DEMO.coordinatorHHC);
    expect((await c.get('/api/studies/TEMPO-FT/sites/HHC')).status).toBe(200);
    const other = await c.get('/api/studies/TEMPO-FT/sites/MLB');
    expect(other.status).toBe(403);
    expect(other.body.error.message).toMatch(/MLB/);
    // A study-wide membership reaches every site.
    const m = await signedIn(DEMO.monitor);
    expect((await m.get('/api/studies/TEMPO-FT/sites/MLB')).status).toBe(200);
  });

  it('answers 404 for an unknown study and 403 for a study the user is not in', async () => {
    const c = await signedIn(DEMO.coordinatorHHC);
    expect((await c.get('/api/studies/NO-SUCH-STUDY/sites')).status).toBe(404);
    const other = await Study.create({ code: uniq('OTHER').toUpperCase(), title: 'Another study', config: {} });
    expect((await c.get(`/api/studies/${other.code}/sites`)).status).toBe(403);
  });

  it('a revoked membership loses access on the next request', async () => {
    const { email, memberships } = await makeUser([{ role: 'coordinator', site: 'KVH' }]);
    const c = new Client();
    expect((await c.signIn(email, TEST_PASSWORD)).ok).toBe(true);
    expect((await c.get('/api/studies/TEMPO-FT/sites/KVH')).status).toBe(200);
    await Membership.update({ revokedAt: new Date() }, { where: { id: memberships[0].id } });
    expect((await c.get('/api/studies/TEMPO-FT/sites/KVH')).status).toBe(403);
  });

  it('revoking through the admin route takes effect at once and is audited', async () => {
    const { email, memberships } = await makeUser([{ role: 'therapist', site: 'NPU' }]);
    const c = new Client();
    await c.signIn(email, TEST_PASSWORD);
    expect((await c.get('/api/studies/TEMPO-FT/sites/NPU')).status).toBe(200);
    const admin = await signedIn(DEMO.admin);
    const noReason = await admin.json('DELETE', `/api/studies/TEMPO-FT/memberships/${memberships[0].id}`, {});
    expect(noReason.status).toBe(400);
    const r = await admin.json('DELETE', `/api/studies/TEMPO-FT/memberships/${memberships[0].id}`, { reason: 'left the trial team' });
    expect(r.status).toBe(200);
    expect((await c.get('/api/studies/TEMPO-FT/sites/NPU')).status).toBe(403);
  });

  it('slides the session: every authenticated answer renews the cookie', async () => {
    const c = await signedIn(DEMO.monitor);
    const before = c.cookie('excursion.session');
    await new Promise((r) => setTimeout(r, 1100));
    const res = await c.raw('/api/me');
    expect(res.status).toBe(200);
    expect(c.cookie('excursion.session')).not.toBe(before);
  });

  it('refuses a state-changing request sent from another site', async () => {
    const admin = await signedIn(DEMO.admin);
    const r = await admin.json('POST', '/api/studies/TEMPO-FT/sites', { code: 'CSRF1', name: 'Cross Site', timeZone: 'UTC', recruitmentTarget: 1 }, { origin: 'http://evil.example', 'sec-fetch-site': 'cross-site' });
    expect(r.status).toBe(403);
  });
});
