// Blinding scan: a blinded person (the assessor always, plus any role the study config names in blindedRoles) reads
// every API route and page the authorisation matrix lets them reach, with real ids of randomised participants that
// have therapy sessions and follow-up records, and every e-mail they received. Nothing may reveal an arm: no arm code,
// arm label, therapy programme name, key, description or arm-specific phase label (all taken from the study
// definition), and no allocation field in any JSON body.
import { describe, it, expect, beforeAll } from 'vitest';
import { randomiseParticipant } from '@/lib/allocation';
import { saveRecord } from '@/lib/crf/records';
import { pinForm } from '@/lib/crf/definitions';
import { runReminders } from '@/lib/reminders';
import { inviteUser } from '@/lib/users/invitations';
import { PROGRAMMES } from '@/lib/therapy';
import { DEMO_STUDY } from '@/lib/studies/demo';
import { blindedRoles } from '@/lib/crf/access';
import { Site, Study, User, Visit } from '@/models';
import type { Role } from '@/lib/roles';
import { demoStudy, makeUser, siteOf, TEST_PASSWORD, uniq } from '../support/factories';
import { Client, DEMO, signedIn } from '../support/http';
import { allMail, waitForMail } from '../support/mail';
import { ensureActivated, example, readyParticipant } from '../support/ready';
import { clientFor, fixtureIds, type Actor, type Ids } from './fixtures';
import { PAGES, ROUTES, expected, expectedPage } from './matrix';

const TODAY = '2026-12-02';

type Forbidden = { words: RegExp[]; keys: Set<string> };

/** The arm-revealing strings of a study, from its own definition: arms, and the therapy programme of each arm. */
export function forbiddenFor(config: Record<string, unknown>): Forbidden {
  const arms = (config.arms ?? []) as { code: string; label: string }[];
  const programmeKeys = Object.values((config.programmes ?? {}) as Record<string, string>);
  const programmes = programmeKeys.map((k) => PROGRAMMES[k]).filter(Boolean);
  // A phase label is arm-revealing when only one arm's programme has it.
  const phaseCount = new Map<string, number>();
  for (const p of programmes) for (const ph of new Set(p.phases.map((x) => x.label))) phaseCount.set(ph, (phaseCount.get(ph) ?? 0) + 1);
  const texts = new Set<string>([
    ...arms.map((a) => a.label),
    ...programmeKeys,
    ...programmes.flatMap((p) => [p.label, p.description]),
    ...[...phaseCount].filter(([, n]) => n === 1).map(([l]) => l),
  ]);
  const esc = (s: string) => s.replace(/[.*+?^${}()|[\]\\]/g, '\\$&');
  const words = [
    // Arm codes as whole words, exactly as written (a code is short; case matters).
    ...arms.map((a) => new RegExp(`(?<![A-Za-z0-9_])${esc(a.code)}(?![A-Za-z0-9_])`)),
    ...[...texts].map((t) => new RegExp(esc(t).replace(/\s+/g, '\\s+'), 'i')),
  ];
  // Field names that carry an allocation; a blinded reader gets no such field at all.
  const keys = new Set(['arm', 'armLabel', 'armCode', 'arms', 'allocation', 'allocatedAt', 'allocatedBy', 'stratum', 'slot', 'slotId', 'block', 'blockSize', 'programme', 'programmeKey', 'adherence', 'unblindedArm']);
  return { words, keys };
}

function scanText(text: string, f: Forbidden): string[] {
  return f.words.filter((w) => w.test(text)).map((w) => `text ${w.source}`);
}

function scanKeys(v: unknown, f: Forbidden, at = ''): string[] {
  if (Array.isArray(v)) return v.flatMap((x, i) => scanKeys(x, f, `${at}/${i}`));
  if (v && typeof v === 'object') return Object.entries(v).flatMap(([k, x]) => [...(f.keys.has(k) ? [`field ${at}/${k}`] : []), ...scanKeys(x, f, `${at}/${k}`)]);
  return [];
}

// Export downloads (snapshots and dataset exports) are built separately. When they arrive, add their URLs here:
// blinded roles must get 403 on every one, and they are also rows in tests/authz/matrix.ts.
// ---- EXPORT DOWNLOADS: add `(ids) => url` entries.
const EXPORT_DOWNLOADS: ((ids: Ids) => string)[] = [
  (i) => `/api/studies/${i.study}/snapshots`,
  (i) => `/api/studies/${i.study}/snapshots/1`,
  ...(['xlsx', 'csv', 'odm'] as const).flatMap((f) => (['full', 'deidentified'] as const).map((p) => (i: Ids) => `/api/studies/${i.study}/snapshots/1/export?format=${f}&profile=${p}`)),
  (i) => `/api/studies/${i.study}/report`,
];

/** The GET routes and pages an actor may reach per the matrix, with every form of the participant. */
function reachable(actor: Actor, ids: Ids) {
  const api = ROUTES.filter((r) => r.method === 'GET' && r.scope !== 'public' && expected(r, actor, process.env.EXCURSION_BENCH === '1') === 'ok').map((r) => r.probe.url(ids));
  const P = `/api/studies/${ids.study}/sites/${ids.site}/participants/${ids.participant}`;
  const forms = ['eligibility', 'consent', 'baseline', 'operation', 'adverse_event', 'protocol_deviation', 'end_of_participation', 'therapy_session'].map((f) => `${P}/forms/${f}`);
  forms.push(`${P}/forms/follow_up?visit=week6`, `${P}/forms/follow_up?visit=week12`, `${P}/forms/therapy_session?visit=week2`, `${P}/audit?pageSize=200`, `${P}/audit?form=therapy_session`);
  // The development mail page lists every captured message for anyone and exists only while MAIL_CAPTURE_DIR is set
  // (the local SMTP fake); it is absent in production, so it is not part of what a blinded person can reach.
  const pages = PAGES.filter((p) => p.file !== 'dev/mail/page.tsx' && expectedPage(p, actor) === 'ok').map((p) => p.url(ids));
  const PP = `/studies/${ids.study}/sites/${ids.site}/participants/${ids.participant}`;
  pages.push(...['follow_up?visit=week6', 'therapy_session?visit=week2', 'protocol_deviation'].map((f) => `${PP}/forms/${f}`));
  return { api: [...api, ...forms], pages };
}

async function scanAs(c: Client, actor: Actor, ids: Ids, f: Forbidden, email: string) {
  const hits: string[] = [];
  const { api, pages } = reachable(actor, ids);
  let reached = 0;
  for (const url of api) {
    const r = await c.get(url);
    expect(r.status, `${url}`).toBeLessThan(500);
    if (r.status === 200) reached++;
    const text = typeof r.body === 'string' ? r.body : JSON.stringify(r.body);
    for (const h of [...scanText(text, f), ...scanKeys(r.body, f)]) hits.push(`${url}: ${h}`);
  }
  for (const url of pages) {
    const r = await c.page(url);
    expect(r.status, url).toBeLessThan(500);
    if (r.status === 200) reached++;
    for (const h of scanText(r.html, f)) hits.push(`page ${url}: ${h}`);
  }
  for (const make of EXPORT_DOWNLOADS) {
    const r = await c.get(make(ids));
    expect(r.status, `export ${make(ids)} as a blinded ${actor}`).toBe(403);
  }
  const mail = (await allMail()).filter((m) => m.to.includes(email));
  for (const m of mail) for (const h of scanText(`${m.subject}\n${m.text}`, f)) hits.push(`e-mail "${m.subject}": ${h}`);
  return { hits, reached, mails: mail.length, urls: api.length + pages.length };
}

describe('blinding scan', () => {
  let ids: Ids;
  const tempo = forbiddenFor(DEMO_STUDY.config);

  beforeAll(async () => {
    ids = await fixtureIds();
    const study = await demoStudy();
    const hhc = await siteOf(study.id, 'HHC');
    const therapist = (await User.findOne({ where: { email: DEMO.therapistHHC } }))!;
    const assessor = (await User.findOne({ where: { email: DEMO.assessorHHC } }))!;
    // What an unblinded person entered that must stay out of the assessor's sight: a therapy session and a
    // deviation whose wording names the programme; and the assessor's own follow-up.
    await saveRecord({ study, siteId: hhc.id, participantId: ids.participant, formKey: 'therapy_session', visitKey: 'week2', data: { ...example('therapy_session'), session_date: '2026-11-30' }, intent: 'submit', baseVersion: null, actor: { userId: therapist.id, roles: ['therapist'] }, today: TODAY });
    const week6 = (await Visit.findOne({ where: { participantId: ids.participant, visitKey: 'week6' } }))!;
    // Reminders to the site's assessors when the blinded visit window opens.
    await runReminders(new Date(`${week6.earliest}T12:00:00Z`));
    await waitForMail(DEMO.assessorHHC, (m) => m.text.includes(ids.subjectCode));
  });

  it('the forbidden list comes from the study definition', () => {
    const sample = 'EPM EAM Early passive motion early ACTIVE motion tempo_ft_epm Rest in the splint after surgery';
    expect(scanText(sample, tempo).length).toBeGreaterThanOrEqual(6);
    // Words both arms share, and words merely containing a code, are not flagged.
    expect(scanText('Splint off: active motion and tendon gliding; TEMPO-HHC-001; EPMX; guess_passive', tempo)).toEqual([]);
    expect(blindedRoles(DEMO_STUDY.config)).toContain('assessor');
  });

  it('an unblinded reader does see the arm (the scan detects it)', async () => {
    const c = await clientFor('therapist');
    const seen = await scanAs(c, 'therapist', ids, tempo, DEMO.therapistHHC);
    expect(seen.hits.length).toBeGreaterThan(0);
    const r = await c.get(`/api/studies/${ids.study}/sites/${ids.site}/participants?pageSize=200`);
    const text = JSON.stringify(r.body);
    expect(scanText(text, tempo).length + scanKeys(r.body, tempo).length).toBeGreaterThan(0);
    const mail = (await allMail()).filter((m) => m.to.includes(DEMO.therapistHHC));
    expect(mail.some((m) => scanText(m.text, tempo).length > 0)).toBe(true);
  });

  it('the assessor sees nothing arm-revealing in any route, page or e-mail', async () => {
    const c = await clientFor('assessor');
    const r = await scanAs(c, 'assessor', ids, tempo, DEMO.assessorHHC);
    console.log(`blinding scan (assessor): ${r.urls} URLs, ${r.reached} answered 200, ${r.mails} e-mails`);
    expect(r.reached).toBeGreaterThan(10);
    expect(r.mails).toBeGreaterThan(0);
    expect(r.hits).toEqual([]);
  });

  it('a role the study config blinds (monitor) sees nothing arm-revealing either, e-mail included', async () => {
    // This study numbers its participants with a prefix of its own, so its IDs are told apart from TEMPO-FT's.
    const code = uniq('BLND').toUpperCase();
    const config = { ...DEMO_STUDY.config, blindedRoles: ['assessor', 'monitor'], randomisation: { ...DEMO_STUDY.config.randomisation, subjectPrefix: code } };
    const own = await Study.create({ code, title: 'Blinded monitoring check', config, status: 'recruiting' });
    const site = await Site.create({ studyId: own.id, code: 'AAA', name: 'Alder Clinic', timeZone: 'UTC', recruitmentTarget: 10 });
    for (const f of ['eligibility', 'consent', 'baseline', 'operation', 'follow_up', 'adverse_event', 'protocol_deviation', 'end_of_participation', 'therapy_session']) await pinForm(own.id, f, 1, { userId: null, role: 'system' });
    await ensureActivated(own);
    const coord = await makeUser([{ role: 'coordinator', site: 'AAA', studyId: own.id }]);
    const ther = await makeUser([{ role: 'therapist', site: 'AAA', studyId: own.id }]);
    const p = await readyParticipant(own, site, { coordinatorId: coord.user.id });
    const view = await randomiseParticipant({ study: own, site, participantId: p.id, actor: { userId: coord.user.id, role: 'coordinator' } });
    await saveRecord({ study: own, siteId: site.id, participantId: p.id, formKey: 'therapy_session', visitKey: 'week2', data: { ...example('therapy_session'), session_date: '2026-11-30' }, intent: 'submit', baseVersion: null, actor: { userId: ther.user.id, roles: ['therapist'] }, today: TODAY });
    // The monitor joins through a real invitation e-mail (which is scanned too).
    const admin = (await User.findOne({ where: { email: DEMO.admin } }))!;
    const email = `${uniq('blinded-monitor')}@test.example`;
    await inviteUser({ study: own, email, name: 'Blinded Monitor', role: 'monitor' as Role, siteCode: null, actor: { userId: admin.id, role: 'admin' } });
    const inv = await waitForMail(email);
    const token = /\/invite\/([A-Za-z0-9_-]+)/.exec(inv.text)![1];
    const accept = await new Client().post('/api/invitations/accept', { token, password: 'blinded-monitor-pass-2026' });
    expect(accept.status).toBe(200);
    const c = await signedIn(email, 'blinded-monitor-pass-2026');
    const ownIds: Ids = { ...ids, study: own.code, site: 'AAA', participant: p.id, subjectCode: view.subjectCode };
    const r = await scanAs(c, 'monitor', ownIds, forbiddenFor(config), email);
    console.log(`blinding scan (monitor blinded by the study config): ${r.urls} URLs, ${r.reached} answered 200, ${r.mails} e-mails`);
    expect(r.reached).toBeGreaterThan(8);
    expect(r.mails).toBeGreaterThan(0);
    expect(r.hits).toEqual([]);
    // The same scan as the study's unblinded therapist finds the arm: the scan is not vacuous.
    const t = await signedIn(ther.email, TEST_PASSWORD);
    const seen = await scanAs(t, 'therapist', ownIds, forbiddenFor(config), ther.email);
    expect(seen.hits.length).toBeGreaterThan(0);
  });
});
