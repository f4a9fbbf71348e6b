// The authorisation matrix: every API route handler × method and every page, with the outcome each actor must get.
// matrix.test.ts discovers app/api/**/route.ts and app/**/page.tsx on disk and fails when this table misses one or
// lists one that no longer exists. To add a route: add a row here (who passes the gate, and a probe).
//
// Outcomes: 'ok' = got past the gate (GET: 2xx; write: the probe's body is refused as invalid, 400, so nothing is
// written), or the exact refusal 401 (no session), 403 (no role for this study or site), 404 (hidden). Pages: 'ok' is
// 200, 'signin' a redirect to /signin, 404 the not-found page, 'home' a redirect to /.
import type { Role } from '@/lib/roles';
import { ROLES } from '@/lib/roles';
import type { Actor, Ids } from './fixtures';

export type Outcome = 'ok' | 401 | 403 | 404;
export type PageOutcome = 'ok' | 'signin' | 'home' | 404;
type Method = 'GET' | 'POST' | 'PUT' | 'PATCH' | 'DELETE';

export type Probe = {
  /** The concrete URL, with real ids. */
  url: (ids: Ids) => string;
  /** A body for writes, chosen to be refused by validation once past the gate (never a real write). */
  body?: unknown;
  /** Content type of the body (default application/json). */
  contentType?: string;
  /** Statuses that mean "past the gate" for this probe (default: GET 200, writes 400). */
  passed?: number[];
};

export type RouteRow = {
  /** The route file below app/api, as on disk. */
  file: string;
  method: Method;
  /** user: any signed-in person; study / site: a membership for the study (and the site) in the URL. */
  scope: 'public' | 'user' | 'study' | 'site';
  /** Roles the gate lets through ('any' = every member of the scope). Ignored for public and user scope. */
  roles: readonly Role[] | 'any';
  probe: Probe;
  /** Cells that differ from what scope and roles imply, with the reason in a comment. */
  except?: Partial<Record<Actor, Outcome>>;
  /** Bench-only routes answer 404 to everyone unless the server runs with EXCURSION_BENCH=1. */
  benchOnly?: boolean;
  note?: string;
};

export type PageRow = {
  file: string;
  url: (ids: Ids) => string;
  /** public: anyone; user: any signed-in person; study / site: requireStudyAccess with these roles. */
  scope: 'public' | 'user' | 'study' | 'site';
  roles: readonly Role[] | 'any';
  except?: Partial<Record<Actor, PageOutcome>>;
};

const S = (ids: Ids) => `/api/studies/${ids.study}`;
const SITE = (ids: Ids) => `${S(ids)}/sites/${ids.site}`;
const P = (ids: Ids) => `${SITE(ids)}/participants/${ids.participant}`;
const ALL: readonly Role[] = ROLES;
const READERS: readonly Role[] = ['coordinator', 'therapist', 'assessor', 'investigator', 'monitor', 'data_manager'];
const BAD = { unexpectedField: true };

export const ROUTES: RouteRow[] = [
  // next-auth's own endpoints are public by design: sign-in, CSRF token, session, sign-out.
  { file: 'auth/[...nextauth]/route.ts', method: 'GET', scope: 'public', roles: 'any', probe: { url: () => '/api/auth/csrf' } },
  { file: 'auth/[...nextauth]/route.ts', method: 'POST', scope: 'public', roles: 'any', probe: { url: () => '/api/auth/callback/credentials', body: 'csrfToken=wrong&email=x%40y.example&password=x', contentType: 'application/x-www-form-urlencoded', passed: [200, 302, 400] }, note: 'a wrong CSRF token is refused by next-auth itself' },
  { file: 'health/route.ts', method: 'GET', scope: 'public', roles: 'any', probe: { url: () => '/api/health' } },
  { file: 'invitations/accept/route.ts', method: 'POST', scope: 'public', roles: 'any', probe: { url: () => '/api/invitations/accept', body: BAD } },
  { file: 'me/route.ts', method: 'GET', scope: 'user', roles: 'any', probe: { url: () => '/api/me' } },
  { file: 'bench/bare/route.ts', method: 'GET', scope: 'public', roles: 'any', benchOnly: true, probe: { url: () => '/api/bench/bare' } },
  { file: 'bench/recruitment-sql/[study]/route.ts', method: 'GET', scope: 'study', roles: ['investigator', 'data_manager', 'monitor'], benchOnly: true, probe: { url: (i) => `/api/bench/recruitment-sql/${i.study}` } },

  { file: 'studies/[study]/dashboard/route.ts', method: 'GET', scope: 'study', roles: ['investigator', 'data_manager', 'monitor'], probe: { url: (i) => `${S(i)}/dashboard` } },
  { file: 'studies/[study]/invitations/route.ts', method: 'POST', scope: 'study', roles: ['admin'], probe: { url: (i) => `${S(i)}/invitations`, body: BAD } },
  { file: 'studies/[study]/memberships/route.ts', method: 'POST', scope: 'study', roles: ['admin'], probe: { url: (i) => `${S(i)}/memberships`, body: BAD } },
  { file: 'studies/[study]/memberships/[membershipId]/route.ts', method: 'DELETE', scope: 'study', roles: ['admin'], probe: { url: (i) => `${S(i)}/memberships/${i.membership}`, body: BAD } },
  { file: 'studies/[study]/randomisation/route.ts', method: 'GET', scope: 'study', roles: ['data_manager'], probe: { url: (i) => `${S(i)}/randomisation` } },
  { file: 'studies/[study]/randomisation/activate/route.ts', method: 'POST', scope: 'study', roles: ['data_manager'], probe: { url: (i) => `${S(i)}/randomisation/activate`, body: BAD } },
  { file: 'studies/[study]/safety/route.ts', method: 'GET', scope: 'study', roles: ['investigator', 'data_manager', 'monitor'], probe: { url: (i) => `${S(i)}/safety` } },
  { file: 'studies/[study]/sites/route.ts', method: 'GET', scope: 'study', roles: 'any', probe: { url: (i) => `${S(i)}/sites` } },
  { file: 'studies/[study]/sites/route.ts', method: 'POST', scope: 'study', roles: ['admin'], probe: { url: (i) => `${S(i)}/sites`, body: BAD } },
  { file: 'studies/[study]/unblinding/route.ts', method: 'GET', scope: 'study', roles: ['data_manager', 'investigator'], probe: { url: (i) => `${S(i)}/unblinding` } },
  { file: 'studies/[study]/users/route.ts', method: 'GET', scope: 'study', roles: ['admin'], probe: { url: (i) => `${S(i)}/users` } },
  { file: 'studies/[study]/users/[userId]/deactivate/route.ts', method: 'POST', scope: 'study', roles: ['admin'], probe: { url: (i) => `${S(i)}/users/${i.user}/deactivate`, body: BAD } },
  { file: 'studies/[study]/users/[userId]/invitations/route.ts', method: 'POST', scope: 'study', roles: ['admin'], probe: { url: (i) => `${S(i)}/users/${i.user}/invitations`, body: BAD } },
  { file: 'studies/[study]/worklist/route.ts', method: 'GET', scope: 'study', roles: ['assessor', 'coordinator'], probe: { url: (i) => `${S(i)}/worklist` } },

  { file: 'studies/[study]/sites/[site]/route.ts', method: 'GET', scope: 'site', roles: 'any', probe: { url: SITE } },
  { file: 'studies/[study]/sites/[site]/route.ts', method: 'PATCH', scope: 'site', roles: ['admin'], probe: { url: SITE, body: BAD } },
  { file: 'studies/[study]/sites/[site]/participants/route.ts', method: 'GET', scope: 'site', roles: READERS, probe: { url: (i) => `${SITE(i)}/participants` } },
  { file: 'studies/[study]/sites/[site]/participants/[participant]/route.ts', method: 'GET', scope: 'site', roles: READERS, probe: { url: P } },
  { file: 'studies/[study]/sites/[site]/participants/[participant]/adherence/route.ts', method: 'GET', scope: 'site', roles: ['coordinator', 'therapist', 'investigator', 'data_manager'], probe: { url: (i) => `${P(i)}/adherence` } },
  { file: 'studies/[study]/sites/[site]/participants/[participant]/audit/route.ts', method: 'GET', scope: 'site', roles: READERS, probe: { url: (i) => `${P(i)}/audit` } },
  { file: 'studies/[study]/sites/[site]/participants/[participant]/forms/[form]/route.ts', method: 'GET', scope: 'site', roles: READERS, probe: { url: (i) => `${P(i)}/forms/baseline` } },
  { file: 'studies/[study]/sites/[site]/participants/[participant]/forms/[form]/route.ts', method: 'PUT', scope: 'site', roles: ['coordinator', 'therapist', 'assessor', 'investigator'], probe: { url: (i) => `${P(i)}/forms/baseline`, body: BAD } },
  { file: 'studies/[study]/sites/[site]/participants/[participant]/forms/[form]/void/route.ts', method: 'POST', scope: 'site', roles: ['coordinator', 'therapist', 'assessor', 'investigator', 'data_manager'], probe: { url: (i) => `${P(i)}/forms/baseline/void`, body: BAD } },
  { file: 'studies/[study]/sites/[site]/participants/[participant]/randomise/route.ts', method: 'GET', scope: 'site', roles: ['coordinator'], probe: { url: (i) => `${P(i)}/randomise` } },
  { file: 'studies/[study]/sites/[site]/participants/[participant]/randomise/route.ts', method: 'POST', scope: 'site', roles: ['coordinator'], probe: { url: (i) => `${P(i)}/randomise`, body: BAD } },
  { file: 'studies/[study]/sites/[site]/participants/[participant]/signatures/route.ts', method: 'GET', scope: 'site', roles: READERS, probe: { url: (i) => `${P(i)}/signatures` } },
  { file: 'studies/[study]/sites/[site]/participants/[participant]/signatures/route.ts', method: 'POST', scope: 'site', roles: ['investigator'], probe: { url: (i) => `${P(i)}/signatures`, body: BAD } },
  // The gate admits every role but the assessor; emergencyUnblind then refuses roles the study does not name (see
  // DEEP_PROBES below).
  { file: 'studies/[study]/sites/[site]/participants/[participant]/unblind/route.ts', method: 'POST', scope: 'site', roles: ALL.filter((r) => r !== 'assessor'), probe: { url: (i) => `${P(i)}/unblind`, body: BAD } },
  // The body is the file itself: an empty body is refused (400) once past the gate.
  { file: 'studies/[study]/sites/[site]/participants/[participant]/uploads/route.ts', method: 'POST', scope: 'site', roles: ['coordinator'], probe: { url: (i) => `${P(i)}/uploads`, body: '', contentType: 'application/pdf' } },
  { file: 'studies/[study]/sites/[site]/participants/[participant]/verify/route.ts', method: 'POST', scope: 'site', roles: ['monitor'], probe: { url: (i) => `${P(i)}/verify`, body: BAD } },
  { file: 'studies/[study]/sites/[site]/queries/route.ts', method: 'GET', scope: 'site', roles: ['monitor', 'data_manager', 'coordinator', 'investigator', 'therapist', 'assessor'], probe: { url: (i) => `${SITE(i)}/queries` } },
  { file: 'studies/[study]/sites/[site]/queries/route.ts', method: 'POST', scope: 'site', roles: ['monitor', 'data_manager'], probe: { url: (i) => `${SITE(i)}/queries`, body: BAD } },
  { file: 'studies/[study]/sites/[site]/queries/[query]/answer/route.ts', method: 'POST', scope: 'site', roles: ['coordinator', 'therapist', 'assessor', 'investigator'], probe: { url: (i) => `${SITE(i)}/queries/${i.query}/answer`, body: BAD } },
  { file: 'studies/[study]/sites/[site]/queries/[query]/close/route.ts', method: 'POST', scope: 'site', roles: ['monitor', 'data_manager'], probe: { url: (i) => `${SITE(i)}/queries/${i.query}/close`, body: BAD } },
  { file: 'studies/[study]/sites/[site]/queries/[query]/reopen/route.ts', method: 'POST', scope: 'site', roles: ['monitor', 'data_manager'], probe: { url: (i) => `${SITE(i)}/queries/${i.query}/reopen`, body: BAD } },
  { file: 'studies/[study]/sites/[site]/screening/route.ts', method: 'GET', scope: 'site', roles: ['coordinator', 'investigator', 'monitor', 'data_manager'], probe: { url: (i) => `${SITE(i)}/screening` } },
  { file: 'studies/[study]/sites/[site]/screening/route.ts', method: 'POST', scope: 'site', roles: ['coordinator'], probe: { url: (i) => `${SITE(i)}/screening`, body: BAD } },
  { file: 'studies/[study]/sites/[site]/screening/[participant]/outcome/route.ts', method: 'POST', scope: 'site', roles: ['coordinator'], probe: { url: (i) => `${SITE(i)}/screening/${i.participant}/outcome`, body: BAD } },
  { file: 'studies/[study]/sites/[site]/uploads/[upload]/route.ts', method: 'GET', scope: 'site', roles: ['coordinator', 'therapist', 'investigator', 'data_manager', 'monitor'], probe: { url: (i) => `${SITE(i)}/uploads/${i.upload}` } },

  { file: 'studies/[study]/safety/[sae]/follow-up/route.ts', method: 'POST', scope: 'study', roles: ['investigator'], probe: { url: (i) => `${S(i)}/safety/1/follow-up`, body: BAD } },

  // Database lock: the data manager locks and unlocks; the admin may read the state and the readiness list.
  { file: 'studies/[study]/lock/route.ts', method: 'GET', scope: 'study', roles: ['data_manager', 'admin'], probe: { url: (i) => `${S(i)}/lock` } },
  { file: 'studies/[study]/lock/route.ts', method: 'POST', scope: 'study', roles: ['data_manager'], probe: { url: (i) => `${S(i)}/lock`, body: BAD } },
  { file: 'studies/[study]/lock/readiness/route.ts', method: 'GET', scope: 'study', roles: ['data_manager', 'admin'], probe: { url: (i) => `${S(i)}/lock/readiness` } },
  { file: 'studies/[study]/lock/unlock-requests/route.ts', method: 'POST', scope: 'study', roles: ['data_manager'], probe: { url: (i) => `${S(i)}/lock/unlock-requests`, body: BAD } },
  { file: 'studies/[study]/lock/unlock-requests/[request]/approve/route.ts', method: 'POST', scope: 'study', roles: ['data_manager'], probe: { url: (i) => `${S(i)}/lock/unlock-requests/1/approve`, body: BAD } },

  // Locked datasets: statisticians and data managers only (they carry the allocation). TEMPO-FT is not locked in the
  // test run, so it has no snapshot: past the gate, an unknown snapshot is 404; every other actor is refused first.
  { file: 'studies/[study]/snapshots/route.ts', method: 'GET', scope: 'study', roles: ['statistician', 'data_manager'], probe: { url: (i) => `${S(i)}/snapshots` } },
  { file: 'studies/[study]/snapshots/route.ts', method: 'POST', scope: 'study', roles: ['data_manager'], probe: { url: (i) => `${S(i)}/snapshots`, body: BAD } },
  { file: 'studies/[study]/snapshots/[snapshot]/route.ts', method: 'GET', scope: 'study', roles: ['statistician', 'data_manager'], probe: { url: (i) => `${S(i)}/snapshots/999999999`, passed: [404] } },
  { file: 'studies/[study]/snapshots/[snapshot]/export/route.ts', method: 'GET', scope: 'study', roles: ['statistician', 'data_manager'], probe: { url: (i) => `${S(i)}/snapshots/999999999/export?format=xlsx&profile=full`, passed: [404] } },

  // The trial report is by arm: statisticians and data managers (refused to roles the study blinds); the sample-size
  // calculator reads no study data.
  { file: 'studies/[study]/report/route.ts', method: 'GET', scope: 'study', roles: ['statistician', 'data_manager'], probe: { url: (i) => `${S(i)}/report` } },
  { file: 'studies/[study]/sample-size/route.ts', method: 'POST', scope: 'study', roles: ['statistician', 'data_manager', 'investigator'], probe: { url: (i) => `${S(i)}/sample-size`, body: BAD } },
];

/**
 * Second probes where a check after the gate refuses a role the gate admits, with a body that is valid for the gate
 * and the schema: the exact status each listed actor gets. Only refused actors are listed, so nothing is written.
 */
export const DEEP_PROBES: { file: string; method: Method; probe: Probe; expect: Partial<Record<Actor, Outcome>> }[] = [
  {
    file: 'studies/[study]/sites/[site]/participants/[participant]/unblind/route.ts',
    method: 'POST',
    probe: { url: (i) => `${P(i)}/unblind`, body: { reason: 'Suspected tendon rupture needs a decision' } },
    // TEMPO-FT names only the investigator in unblindingRoles.
    expect: { admin: 403, data_manager: 403, coordinator: 403, therapist: 403, monitor: 403, statistician: 403, assessor: 403 },
  },
];

export const PAGES: PageRow[] = [
  { file: 'page.tsx', url: () => '/', scope: 'user', roles: 'any' },
  { file: 'signin/page.tsx', url: () => '/signin', scope: 'public', roles: 'any', except: { admin: 'home', data_manager: 'home', coordinator: 'home', therapist: 'home', assessor: 'home', investigator: 'home', monitor: 'home', statistician: 'home', 'coordinator@MLB': 'home', 'therapist@MLB': 'home', 'assessor@MLB': 'home' } },
  { file: 'invite/[token]/page.tsx', url: () => '/invite/not-a-real-token-0000000000', scope: 'public', roles: 'any' },
  // Development tool, present only while MAIL_CAPTURE_DIR is set (the local SMTP fake); absent (404) in production.
  { file: 'dev/mail/page.tsx', url: () => '/dev/mail', scope: 'public', roles: 'any' },
  { file: 'studies/[study]/page.tsx', url: (i) => `/studies/${i.study}`, scope: 'study', roles: 'any' },
  { file: 'studies/[study]/admin/sites/page.tsx', url: (i) => `/studies/${i.study}/admin/sites`, scope: 'study', roles: ['admin'] },
  { file: 'studies/[study]/admin/users/page.tsx', url: (i) => `/studies/${i.study}/admin/users`, scope: 'study', roles: ['admin'] },
  { file: 'studies/[study]/dashboard/page.tsx', url: (i) => `/studies/${i.study}/dashboard`, scope: 'study', roles: ['investigator', 'data_manager', 'monitor'] },
  { file: 'studies/[study]/randomisation/page.tsx', url: (i) => `/studies/${i.study}/randomisation`, scope: 'study', roles: ['data_manager'] },
  { file: 'studies/[study]/worklist/page.tsx', url: (i) => `/studies/${i.study}/worklist`, scope: 'study', roles: ['assessor', 'coordinator'] },
  { file: 'studies/[study]/sites/[site]/page.tsx', url: (i) => `/studies/${i.study}/sites/${i.site}`, scope: 'site', roles: 'any' },
  { file: 'studies/[study]/sites/[site]/participants/page.tsx', url: (i) => `/studies/${i.study}/sites/${i.site}/participants`, scope: 'site', roles: READERS },
  { file: 'studies/[study]/sites/[site]/participants/[participant]/page.tsx', url: (i) => `/studies/${i.study}/sites/${i.site}/participants/${i.participant}`, scope: 'site', roles: READERS },
  { file: 'studies/[study]/sites/[site]/participants/[participant]/audit/page.tsx', url: (i) => `/studies/${i.study}/sites/${i.site}/participants/${i.participant}/audit`, scope: 'site', roles: READERS },
  { file: 'studies/[study]/sites/[site]/participants/[participant]/forms/[form]/page.tsx', url: (i) => `/studies/${i.study}/sites/${i.site}/participants/${i.participant}/forms/baseline`, scope: 'site', roles: READERS },
  { file: 'studies/[study]/sites/[site]/queries/page.tsx', url: (i) => `/studies/${i.study}/sites/${i.site}/queries`, scope: 'site', roles: ['monitor', 'data_manager', 'coordinator', 'investigator', 'therapist', 'assessor'] },
  { file: 'studies/[study]/sites/[site]/screening/page.tsx', url: (i) => `/studies/${i.study}/sites/${i.site}/screening`, scope: 'site', roles: ['coordinator', 'investigator', 'monitor', 'data_manager'] },
  { file: 'studies/[study]/lock/page.tsx', url: (i) => `/studies/${i.study}/lock`, scope: 'study', roles: ['data_manager', 'admin'] },
  { file: 'studies/[study]/snapshots/page.tsx', url: (i) => `/studies/${i.study}/snapshots`, scope: 'study', roles: ['statistician', 'data_manager'] },
  { file: 'studies/[study]/report/page.tsx', url: (i) => `/studies/${i.study}/report`, scope: 'study', roles: ['statistician', 'data_manager'] },
  { file: 'studies/[study]/sample-size/page.tsx', url: (i) => `/studies/${i.study}/sample-size`, scope: 'study', roles: ['statistician', 'data_manager', 'investigator'] },
];

/** The role an actor acts in, and whether that role is held at the site in the URL (HHC) or elsewhere (MLB). */
export function actorRole(a: Actor): { role: Role | null; elsewhere: boolean } {
  if (a === 'anonymous') return { role: null, elsewhere: false };
  const [role, site] = a.split('@');
  return { role: role as Role, elsewhere: site === 'MLB' };
}

/** What scope and roles imply for one actor, before exceptions. */
export function expected(row: RouteRow, a: Actor, benchMode: boolean): Outcome {
  if (row.benchOnly && !benchMode) return 404;
  if (row.except?.[a] !== undefined) return row.except[a]!;
  const { role, elsewhere } = actorRole(a);
  if (row.scope === 'public') return 'ok';
  if (!role) return 401;
  if (row.scope === 'user') return 'ok';
  if (row.scope === 'site' && elsewhere) return 403;
  return row.roles === 'any' || row.roles.includes(role) ? 'ok' : 403;
}

/** Pages hide what a person may not see: not a member or a role outside the list → the not-found page. */
export function expectedPage(row: PageRow, a: Actor): PageOutcome {
  if (row.except?.[a] !== undefined) return row.except[a]!;
  const { role, elsewhere } = actorRole(a);
  if (row.scope === 'public') return 'ok';
  if (!role) return 'signin';
  if (row.scope === 'user') return 'ok';
  if (row.scope === 'site' && elsewhere) return 404;
  return row.roles === 'any' || row.roles.includes(role) ? 'ok' : 404;
}
