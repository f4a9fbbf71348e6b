// Each role's home page lists only that person's studies, sites and roles.
import { describe, it, expect } from 'vitest';
import { Client, DEMO, signedIn } from '../support/http';
import { makeUser, TEST_PASSWORD, uniq } from '../support/factories';
import { Membership, Site, Study } from '@/models';

const text = (html: string) => html.replace(/<[^>]+>/g, ' ').replace(/\s+/g, ' ');

describe('home page per role', () => {
  it('redirects to sign-in without a session', async () => {
    const r = await new Client().page('/');
    expect([303, 307, 308]).toContain(r.status);
    expect(r.location).toMatch(/\/signin/);
  });

  const cases: { email: string; sees: string[]; notSees: string[] }[] = [
    { email: DEMO.coordinatorHHC, sees: ['Site coordinator', 'HHC · Harbourside Hand Centre'], notSees: ['MLB · Millbrook', 'Administrator', 'All sites'] },
    { email: DEMO.coordinatorMLB, sees: ['Site coordinator', 'MLB · Millbrook General'], notSees: ['HHC · Harbourside', 'All sites'] },
    { email: DEMO.assessorHHC, sees: ['Blinded assessor', 'HHC · Harbourside Hand Centre'], notSees: ['MLB · Millbrook', 'Site coordinator'] },
    { email: DEMO.therapistHHC, sees: ['Therapist', 'HHC · Harbourside'], notSees: ['KVH · Kestrel'] },
    { email: DEMO.admin, sees: ['Administrator', 'All sites', 'Users', 'Sites'], notSees: ['Site coordinator'] },
    { email: DEMO.investigator, sees: ['Investigator', 'All sites'], notSees: ['HHC · Harbourside'] },
    { email: DEMO.monitor, sees: ['Monitor'], notSees: ['Investigator'] },
    { email: DEMO.statistician, sees: ['Statistician'], notSees: ['Monitor'] },
    { email: DEMO.dataManager, sees: ['Data manager'], notSees: ['Statistician'] },
  ];
  for (const c of cases) {
    it(`${c.email} sees only their own roles and sites`, async () => {
      const client = await signedIn(c.email);
      const r = await client.page('/');
      expect(r.status).toBe(200);
      const t = text(r.html);
      expect(t).toContain('Your studies');
      expect(t).toContain('TEMPO-FT');
      for (const s of c.sees) expect(t).toContain(s);
      for (const s of c.notSees) expect(t).not.toContain(s);
    });
  }

  it('a person in two studies sees both; others do not see the second study', async () => {
    const other = await Study.create({ code: uniq('GRIP').toUpperCase(), title: 'Grip Strength Registry', config: {} });
    const site = await Site.create({ studyId: other.id, code: 'ZEN', name: 'Zenith Clinic', timeZone: 'UTC', recruitmentTarget: 5 });
    const { email, user } = await makeUser([{ role: 'coordinator', site: 'HHC' }]);
    await Membership.create({ userId: user.id, studyId: other.id, siteId: site.id, role: 'assessor', revokedAt: null });
    const c = new Client();
    await c.signIn(email, TEST_PASSWORD);
    const t = text((await c.page('/')).html);
    expect(t).toContain(other.code);
    expect(t).toContain('ZEN · Zenith Clinic');
    expect(t).toContain('HHC · Harbourside');
    const coord = text((await (await signedIn(DEMO.coordinatorHHC)).page('/')).html);
    expect(coord).not.toContain(other.code);
    // Pages of a study the person is not in answer as not found.
    expect((await (await signedIn(DEMO.coordinatorHHC)).page(`/studies/${other.code}`)).status).toBe(404);
  });

  it('the study page shows the site table; admin pages are not found for a coordinator', async () => {
    const c = await signedIn(DEMO.coordinatorHHC);
    const study = await c.page('/studies/TEMPO-FT');
    expect(study.status).toBe(200);
    expect(text(study.html)).toContain('Harbourside Hand Centre');
    expect(text(study.html)).not.toContain('Millbrook General');
    expect((await c.page('/studies/TEMPO-FT/admin/users')).status).toBe(404);
    expect((await c.page('/studies/TEMPO-FT/sites/MLB')).status).toBe(404);
  });
});
