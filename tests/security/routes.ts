// The app's pages and API routes, read from app/ so that routes added later are checked too; dynamic segments
// are filled with values that exist (or, where none is needed, well-formed ones).
import { readdirSync, readFileSync, statSync } from 'node:fs';
import path from 'node:path';

export type ApiRoute = { file: string; pattern: string; methods: string[] };

function walk(dir: string, name: string): string[] {
  return readdirSync(dir).flatMap((e) => {
    const p = path.join(dir, e);
    return statSync(p).isDirectory() ? walk(p, name) : e === name ? [p] : [];
  });
}

const toPattern = (file: string, base: string) => '/' + path.relative(base, path.dirname(file)).split(path.sep).filter(Boolean).join('/');

export function pages(): string[] {
  return walk('app', 'page.tsx').map((f) => toPattern(f, 'app')).map((p) => (p === '/' ? '/' : p));
}

export function apiRoutes(): ApiRoute[] {
  return walk('app/api', 'route.ts').map((file) => {
    const src = readFileSync(file, 'utf8');
    const methods = new Set<string>();
    for (const m of src.matchAll(/export const (GET|POST|PUT|PATCH|DELETE)\b/g)) methods.add(m[1]);
    for (const m of src.matchAll(/export \{([^}]*)\}/g)) for (const n of m[1].matchAll(/\bas (GET|POST|PUT|PATCH|DELETE)\b/g)) methods.add(n[1]);
    for (const m of src.matchAll(/export (?:async )?function (GET|POST|PUT|PATCH|DELETE)\b/g)) methods.add(m[1]);
    return { file, pattern: '/api' + toPattern(file, 'app/api').replace(/^\/$/, ''), methods: [...methods] };
  });
}

/** Fills `[segment]` and `[...segment]` with the given values (a default for anything unnamed). */
export function fill(pattern: string, values: Record<string, string>): string {
  return pattern.replace(/\[(?:\.\.\.)?([A-Za-z]+)\]/g, (_, name: string) => encodeURIComponent(values[name] ?? '1'));
}

/**
 * A study of its own with one site, one participant and an administrator, so that sweeping every route with
 * empty bodies can change nothing another test relies on. Ids that are not created here point nowhere.
 */
export async function sweepStudy() {
  const { Site, Study } = await import('@/models');
  const { makeUser, uniq } = await import('../support/factories');
  const { recordScreening } = await import('@/lib/screening');
  const { DEMO_STUDY } = await import('@/lib/studies/demo');
  const study = await Study.create({ code: uniq('SWEEP').toUpperCase(), title: 'Route sweep', config: DEMO_STUDY.config, status: 'recruiting' });
  const site = await Site.create({ studyId: study.id, code: 'AAA', name: 'Alder Clinic', timeZone: 'UTC', recruitmentTarget: 10 });
  const admin = await makeUser([{ role: 'admin', site: null, studyId: study.id }]);
  const p = await recordScreening({ studyId: study.id, siteId: site.id, screeningNumber: uniq('SW'), screeningDate: '2026-11-20', age: 40, sex: 'F', actor: { userId: admin.user.id, role: 'admin' } });
  const NONE = '999999999';
  const values: Record<string, string> = {
    study: study.code, site: 'AAA', participant: String(p.id), form: 'baseline', token: 'not-a-real-invitation-token', upload: 'AAAAAAAAAAAAAAAAAAAAAA',
    membershipId: NONE, userId: NONE, query: NONE,
  };
  return { study, site, admin, participant: p, values };
}
