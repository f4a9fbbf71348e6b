// The authorisation matrix (tests/authz/matrix.ts) against the running server: every route handler × method and
// every page, for every role, a person without a session, site roles held only at another site, and the blinded
// assessor. The table must list exactly the route files and exported methods found on disk.
import { describe, it, expect, beforeAll } from 'vitest';
import { readdirSync, readFileSync } from 'node:fs';
import path from 'node:path';
import { ACTORS, clientFor, fixtureIds, type Actor, type Ids } from './fixtures';
import { DEEP_PROBES, PAGES, ROUTES, expected, expectedPage, type Probe, type RouteRow } from './matrix';
import type { Client } from '../support/http';

const API = path.resolve('app/api');
const APP = path.resolve('app');
const BENCH_MODE = process.env.EXCURSION_BENCH === '1';

function walk(dir: string, name: string): string[] {
  const out: string[] = [];
  for (const e of readdirSync(dir, { withFileTypes: true })) {
    const p = path.join(dir, e.name);
    if (e.isDirectory()) out.push(...walk(p, name));
    else if (e.name === name) out.push(p);
  }
  return out;
}

/** Exported HTTP methods of a route file: `export const GET =`, `export async function POST`, `export { h as GET }`. */
export function exportedMethods(src: string): string[] {
  const m = new Set<string>();
  for (const x of src.matchAll(/export\s+(?:const|let|async\s+function|function)\s+(GET|POST|PUT|PATCH|DELETE|HEAD|OPTIONS)\b/g)) m.add(x[1]);
  for (const x of src.matchAll(/export\s*\{([^}]*)\}/g)) for (const y of x[1].matchAll(/\bas\s+(GET|POST|PUT|PATCH|DELETE|HEAD|OPTIONS)\b|^\s*(GET|POST|PUT|PATCH|DELETE|HEAD|OPTIONS)\s*(?:,|$)/gm)) m.add(y[1] ?? y[2]);
  return [...m].sort();
}

export function discoveredRoutes(): string[] {
  return walk(API, 'route.ts').flatMap((f) => exportedMethods(readFileSync(f, 'utf8')).map((m) => `${m} ${path.relative(API, f)}`)).sort();
}

async function send(c: Client, method: string, probe: Probe, ids: Ids) {
  const url = probe.url(ids);
  if (probe.body === undefined) return c.json(method, url);
  const body = typeof probe.body === 'string' ? probe.body : JSON.stringify(probe.body);
  return c.json(method, url, body, { 'content-type': probe.contentType ?? 'application/json' });
}

function judge(row: { method: string; probe: Probe }, want: string | number, got: { status: number; body: any }): string | null {
  const code = got.body?.error?.code;
  if (got.status >= 500) return `5xx (${got.status} ${code ?? ''})`;
  if (want === 'ok') {
    const passed = row.probe.passed ?? (row.method === 'GET' ? [200] : [400]);
    if (!passed.includes(got.status)) return `expected past the gate (${passed.join('/')}), got ${got.status} ${code ?? ''}`;
    // A write probe carries an invalid body: past the gate it must be refused by validation, never written.
    if (row.method !== 'GET' && got.status === 400 && row.probe.passed === undefined && !['validation_failed', 'bad_request'].includes(code)) return `expected a validation refusal, got ${code}`;
    return null;
  }
  const codes: Record<number, string> = { 401: 'unauthenticated', 403: 'forbidden', 404: 'not_found' };
  if (got.status !== want) return `expected ${want}, got ${got.status} ${code ?? ''}`;
  if (code !== codes[want as number]) return `expected error code ${codes[want as number]}, got ${code}`;
  if (typeof got.body?.error?.message !== 'string' || !got.body.error.message) return 'refusal without a message';
  return null;
}

/** Runs fn over items with at most n in flight. */
async function pool<T>(items: T[], n: number, fn: (x: T) => Promise<void>) {
  let i = 0;
  await Promise.all(Array.from({ length: n }, async () => {
    while (i < items.length) await fn(items[i++]);
  }));
}

describe('authorisation matrix', () => {
  let ids: Ids;
  beforeAll(async () => {
    ids = await fixtureIds();
    for (const a of ACTORS) await clientFor(a);
  });

  it('lists every route handler and method on disk, and nothing else', () => {
    const onDisk = discoveredRoutes();
    const inTable = ROUTES.map((r) => `${r.method} ${r.file}`).sort();
    expect(new Set(inTable).size, 'a route × method is listed twice').toBe(inTable.length);
    expect(onDisk.filter((r) => !inTable.includes(r)), 'routes missing from tests/authz/matrix.ts').toEqual([]);
    expect(inTable.filter((r) => !onDisk.includes(r)), 'rows for routes that no longer exist').toEqual([]);
    expect(onDisk).toContain('GET auth/[...nextauth]/route.ts');
  });

  it('lists every page on disk, and nothing else', () => {
    const onDisk = walk(APP, 'page.tsx').map((f) => path.relative(APP, f)).sort();
    const inTable = PAGES.map((p) => p.file).sort();
    expect(onDisk.filter((p) => !inTable.includes(p)), 'pages missing from tests/authz/matrix.ts').toEqual([]);
    expect(inTable.filter((p) => !onDisk.includes(p)), 'rows for pages that no longer exist').toEqual([]);
  });

  it('every route × actor gets exactly the outcome in the table', async () => {
    const cells = ROUTES.flatMap((row) => ACTORS.map((a) => ({ row, a })));
    const failures: string[] = [];
    const grid = new Map<string, Record<string, string>>();
    await pool(cells, 4, async ({ row, a }) => {
      const want = expected(row, a, BENCH_MODE);
      const got = await send(await clientFor(a), row.method, row.probe, ids);
      const bad = judge(row, want, got);
      const key = `${row.method.padEnd(6)} ${row.file}`;
      grid.set(key, { ...(grid.get(key) ?? {}), [a]: bad ? `✗${got.status}` : String(want) });
      if (bad) failures.push(`${row.method} ${row.probe.url(ids)} as ${a}: ${bad}`);
    });
    printGrid('API routes', grid);
    console.log(`authz matrix: ${cells.length} route cells checked (bench mode ${BENCH_MODE ? 'on' : 'off'})`);
    expect(failures).toEqual([]);
  });

  it('checks after the gate refuse the roles the study does not name, with a valid body', async () => {
    const failures: string[] = [];
    let n = 0;
    for (const d of DEEP_PROBES) {
      for (const [a, want] of Object.entries(d.expect) as [Actor, number][]) {
        const got = await send(await clientFor(a), d.method, d.probe, ids);
        n++;
        const bad = judge({ method: d.method, probe: d.probe }, want, got);
        if (bad) failures.push(`${d.method} ${d.probe.url(ids)} as ${a}: ${bad}`);
      }
    }
    expect(n).toBeGreaterThan(0);
    expect(failures).toEqual([]);
  });

  it('every page × actor gets exactly the outcome in the table', async () => {
    const cells = PAGES.flatMap((row) => ACTORS.map((a) => ({ row, a })));
    const failures: string[] = [];
    const grid = new Map<string, Record<string, string>>();
    await pool(cells, 3, async ({ row, a }) => {
      const want = expectedPage(row, a);
      const c = await clientFor(a);
      const r = await c.page(row.url(ids));
      const loc = r.location ? new URL(r.location, 'http://x').pathname : null;
      const ok =
        r.status < 500 &&
        (want === 'ok' ? r.status === 200 : want === 404 ? r.status === 404 : [302, 303, 307, 308].includes(r.status) && loc === (want === 'signin' ? '/signin' : '/'));
      grid.set(row.file, { ...(grid.get(row.file) ?? {}), [a]: ok ? String(want) : `✗${r.status}` });
      if (!ok) failures.push(`page ${row.url(ids)} as ${a}: expected ${want}, got ${r.status}${r.location ? ` → ${r.location}` : ''}`);
    });
    printGrid('pages', grid);
    expect(failures).toEqual([]);
  });
});

function printGrid(title: string, grid: Map<string, Record<string, string>>) {
  const short = (a: string) => a.replace('data_manager', 'dm').replace('coordinator', 'coord').replace('therapist', 'ther').replace('assessor', 'assr').replace('investigator', 'inv').replace('statistician', 'stat').replace('monitor', 'mon').replace('anonymous', 'anon').replace('admin', 'adm');
  const lines = [`${title}: ${ACTORS.map(short).join(' | ')}`];
  for (const k of [...grid.keys()].sort()) lines.push(`${k}: ${ACTORS.map((a) => grid.get(k)![a] ?? '?').join(' ')}`);
  console.log(lines.join('\n'));
}
