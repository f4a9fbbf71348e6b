// Fuzzing every JSON route (POST/PUT/PATCH/DELETE with a body) with fast-check, signed in as a role that passes the
// gate: wrong types, missing and extra fields, huge strings, deep nesting, odd Unicode, prototype keys, SQL-looking
// strings, invalid dates, non-JSON bodies and wrong content types. Every body is invalid somewhere (checked against
// the route's own zod schema before sending), so the server must refuse each one with a 4xx and the error shape,
// never a 5xx, and no table may gain or lose a row.
import { describe, it, expect, beforeAll } from 'vitest';
import fc from 'fast-check';
import type { z } from 'zod';
import * as S from '@/lib/schemas';
import { ERROR_CODES } from '@/lib/errors';
import { privDb, rows } from '../support/db';
import type { Client } from '../support/http';
import { clientFor, fixtureIds, type Actor, type Ids } from '../authz/fixtures';
import { ROUTES, actorRole, expected } from '../authz/matrix';

type Target = { file: string; method: string; schema: z.ZodType; maxBytes: number };

// The zod schema and body limit each JSON route reads its body with (see the route files). A JSON write route in the
// authorisation matrix that is missing here fails the first test.
const TARGETS: Target[] = [
  { file: 'invitations/accept/route.ts', method: 'POST', schema: S.acceptInvitationBody, maxBytes: 4096 },
  { file: 'studies/[study]/invitations/route.ts', method: 'POST', schema: S.inviteBody, maxBytes: 65536 },
  { file: 'studies/[study]/memberships/route.ts', method: 'POST', schema: S.membershipBody, maxBytes: 65536 },
  { file: 'studies/[study]/memberships/[membershipId]/route.ts', method: 'DELETE', schema: S.reasonBody, maxBytes: 65536 },
  { file: 'studies/[study]/randomisation/activate/route.ts', method: 'POST', schema: S.emptyBody, maxBytes: 65536 },
  { file: 'studies/[study]/sites/route.ts', method: 'POST', schema: S.siteCreateBody, maxBytes: 65536 },
  { file: 'studies/[study]/users/[userId]/deactivate/route.ts', method: 'POST', schema: S.reasonBody, maxBytes: 65536 },
  { file: 'studies/[study]/users/[userId]/invitations/route.ts', method: 'POST', schema: S.emptyBody, maxBytes: 65536 },
  { file: 'studies/[study]/sites/[site]/route.ts', method: 'PATCH', schema: S.siteUpdateBody, maxBytes: 65536 },
  { file: 'studies/[study]/sites/[site]/participants/[participant]/forms/[form]/route.ts', method: 'PUT', schema: S.crfSaveBody, maxBytes: 256 * 1024 },
  { file: 'studies/[study]/sites/[site]/participants/[participant]/forms/[form]/void/route.ts', method: 'POST', schema: S.crfVoidBody, maxBytes: 65536 },
  { file: 'studies/[study]/sites/[site]/participants/[participant]/randomise/route.ts', method: 'POST', schema: S.randomiseBody, maxBytes: 65536 },
  { file: 'studies/[study]/sites/[site]/participants/[participant]/signatures/route.ts', method: 'POST', schema: S.signBody, maxBytes: 65536 },
  { file: 'studies/[study]/sites/[site]/participants/[participant]/unblind/route.ts', method: 'POST', schema: S.unblindBody, maxBytes: 65536 },
  { file: 'studies/[study]/sites/[site]/participants/[participant]/verify/route.ts', method: 'POST', schema: S.verifyBody, maxBytes: 65536 },
  { file: 'studies/[study]/sites/[site]/queries/route.ts', method: 'POST', schema: S.queryOpenBody, maxBytes: 65536 },
  { file: 'studies/[study]/sites/[site]/queries/[query]/answer/route.ts', method: 'POST', schema: S.queryTextBody, maxBytes: 65536 },
  { file: 'studies/[study]/sites/[site]/queries/[query]/close/route.ts', method: 'POST', schema: S.queryCloseBody, maxBytes: 65536 },
  { file: 'studies/[study]/sites/[site]/queries/[query]/reopen/route.ts', method: 'POST', schema: S.queryTextBody, maxBytes: 65536 },
  { file: 'studies/[study]/sites/[site]/screening/route.ts', method: 'POST', schema: S.screeningCreateBody, maxBytes: 65536 },
  { file: 'studies/[study]/sites/[site]/screening/[participant]/outcome/route.ts', method: 'POST', schema: S.screeningOutcomeBody, maxBytes: 65536 },
  { file: 'studies/[study]/safety/[sae]/follow-up/route.ts', method: 'POST', schema: S.saeFollowUpBody, maxBytes: 65536 },
  { file: 'studies/[study]/lock/route.ts', method: 'POST', schema: S.lockBody, maxBytes: 65536 },
  { file: 'studies/[study]/lock/unlock-requests/route.ts', method: 'POST', schema: S.unlockRequestBody, maxBytes: 65536 },
  { file: 'studies/[study]/lock/unlock-requests/[request]/approve/route.ts', method: 'POST', schema: S.unlockApproveBody, maxBytes: 65536 },
  { file: 'studies/[study]/snapshots/route.ts', method: 'POST', schema: S.emptyBody, maxBytes: 65536 },
  { file: 'studies/[study]/sample-size/route.ts', method: 'POST', schema: S.sampleSizeBody, maxBytes: 65536 },
];
// Writes that do not take JSON: next-auth's form-encoded sign-in and the consent upload (the body is the file).
const NOT_JSON = new Set(['POST auth/[...nextauth]/route.ts', 'POST studies/[study]/sites/[site]/participants/[participant]/uploads/route.ts']);

const RUNS_PER_ROUTE = Number(process.env.FUZZ_RUNS_PER_ROUTE ?? 200);
const SEED = Number(process.env.FUZZ_SEED ?? Date.now() % 2 ** 31);

// ------------------------------------------------------------------ arbitraries
const ODD = [
  '\uD800', '\uDFFF', 'a\uD83Dz', '\u202Eevil\u202C', '\u200B\u200C\u200D\uFEFF', 'שלום عربى', '👩‍👩‍👧‍👦🏳️‍🌈', 'e\u0301\u0301\u0301', '\u0000', '\u001F\u007F',
  "' OR '1'='1", "'; DROP TABLE participants; --", '1; SELECT SLEEP(5)', '" UNION SELECT password_hash FROM users --', '%27%20OR%201=1', '\\x27',
  '2026-02-30', '2026-13-01', '0000-00-00', '99999-01-01', 'NaN', 'Infinity', '-0', '1e309', '2026-12-02T25:61:00Z', '',
  '__proto__', 'constructor', 'prototype', '{{7*7}}', '${7*7}', '<script>alert(1)</script>', '../../etc/passwd', '\r\n\r\nX-Injected: 1',
];
const oddString = fc.oneof(fc.constantFrom(...ODD), fc.string({ unit: 'binary', maxLength: 40 }), fc.string({ maxLength: 20 }));
const hugeString = fc.integer({ min: 100 * 1024, max: 130 * 1024 }).map((n) => 'x'.repeat(n));
const scalar = fc.oneof(oddString, fc.integer(), fc.double(), fc.boolean(), fc.constant(null), fc.bigInt().map((b) => Number(b)), fc.constantFrom(0, -1, 2 ** 53, -(2 ** 31), 1.5));
const value: fc.Arbitrary<unknown> = fc.letrec<{ v: unknown }>((tie) => ({
  v: fc.oneof({ depthSize: 'small', withCrossShrink: true }, scalar, fc.array(tie('v'), { maxLength: 4 }), fc.dictionary(oddString, tie('v'), { maxKeys: 4 })),
})).v;
const protoKey = fc.constantFrom('__proto__', 'constructor', 'prototype');

function keysOf(schema: z.ZodType): { all: string[]; required: string[] } {
  const shape = (schema as unknown as { shape?: Record<string, z.ZodType> }).shape ?? {};
  const all = Object.keys(shape);
  return { all, required: all.filter((k) => !(shape[k] as unknown as { isOptional(): boolean }).isOptional()) };
}

/** A body as text plus the headers to send it with; `kind` names the family for the summary. */
type Case = { kind: string; text: string | Buffer; contentType: string | null };

function jsonCases(t: Target): fc.Arbitrary<Case> {
  const { all, required } = keysOf(t.schema);
  const fields = (keys: string[]) => fc.record(Object.fromEntries(keys.map((k) => [k, value])) as Record<string, fc.Arbitrary<unknown>>, { requiredKeys: [] });
  const asJson = (kind: string) => (v: unknown): Case => ({ kind, text: JSON.stringify(v), contentType: 'application/json' });
  const families: fc.Arbitrary<Case>[] = [
    // Wrong types (and odd values) in the known fields.
    fields(all).map(asJson('wrong types')),
    // Known fields plus an unknown one, sometimes a prototype key written into the JSON text itself.
    fc.tuple(fields(all), fc.oneof(oddString, protoKey), value).map(([o, k, v]): Case => {
      const extra = all.includes(k) ? `${k}_extra` : k;
      const text = JSON.stringify(o).replace(/}$/, `${Object.keys(o).length ? ',' : ''}${JSON.stringify(extra)}:${JSON.stringify(v ?? null)}}`);
      return { kind: 'extra field', text, contentType: 'application/json' };
    }),
    // Not an object at all.
    fc.oneof(scalar, fc.array(value, { maxLength: 5 })).map(asJson('not an object')),
    // Deep nesting, in a known field or at the top.
    fc.tuple(fc.integer({ min: 50, max: 3000 }), fc.constantFrom(...(all.length ? all : ['x'])), fc.boolean()).map(([d, k, arr]): Case => {
      const inner = arr ? `${'['.repeat(d)}1${']'.repeat(d)}` : `${'{"a":'.repeat(d)}1${'}'.repeat(d)}`;
      return { kind: 'deep nesting', text: `{${JSON.stringify(k)}:${inner}}`, contentType: 'application/json' };
    }),
    // Huge strings: over the route's limit (413), or large but under it (refused by the schema).
    fc.tuple(hugeString, fc.constantFrom(...(all.length ? all : ['x']))).map(([s, k]): Case => ({ kind: 'huge string', text: JSON.stringify({ [k]: s }), contentType: 'application/json' })),
  ];
  if (required.length) {
    // A required field missing, the others filled with anything.
    families.push(fc.tuple(fc.constantFrom(...required), fields(all)).map(([drop, o]) => {
      const { [drop]: _gone, ...rest } = o as Record<string, unknown>;
      return asJson('missing field')(rest);
    }));
  }
  return fc.oneof(...families);
}

const rawCases: fc.Arbitrary<Case> = fc.oneof(
  fc.constantFrom<Case>(
    { kind: 'non-JSON', text: '{"reason": ', contentType: 'application/json' },
    { kind: 'non-JSON', text: "{'single': 'quotes'}", contentType: 'application/json' },
    { kind: 'non-JSON', text: '{"a":1,}', contentType: 'application/json' },
    { kind: 'non-JSON', text: 'NaN', contentType: 'application/json' },
    { kind: 'non-JSON', text: '', contentType: 'application/json' },
    { kind: 'non-JSON', text: '\uFEFF{}', contentType: 'application/json' },
    { kind: 'non-JSON', text: Buffer.from([0x7b, 0x22, 0x61, 0x22, 0x3a, 0x22, 0xff, 0xfe, 0xc3, 0x28, 0x22, 0x7d]), contentType: 'application/json' },
    { kind: 'wrong content type', text: '{}', contentType: 'text/plain' },
    { kind: 'wrong content type', text: 'reason=abc', contentType: 'application/x-www-form-urlencoded' },
    { kind: 'wrong content type', text: '--b\r\nContent-Disposition: form-data; name="a"\r\n\r\n1\r\n--b--', contentType: 'multipart/form-data; boundary=b' },
    { kind: 'wrong content type', text: '<reason>abc</reason>', contentType: 'application/xml' },
    { kind: 'wrong content type', text: '{}', contentType: null },
  ),
  fc.string({ unit: 'binary', maxLength: 60 }).filter((s) => { try { JSON.parse(s); return false; } catch { return true; } }).map((s): Case => ({ kind: 'non-JSON', text: s, contentType: 'application/json' })),
);

/** Whether the route's own schema would accept this body (then it is not sent: every fuzz body must be invalid). */
function acceptedBySchema(t: Target, c: Case): boolean {
  if (c.contentType !== 'application/json') return false;
  const text = Buffer.isBuffer(c.text) ? c.text.toString('utf8') : c.text;
  if (Buffer.byteLength(text) > t.maxBytes) return false;
  let data: unknown;
  try {
    data = JSON.parse(text);
  } catch {
    return false;
  }
  // The server refuses unpaired surrogates and "__proto__" keys anywhere in a body before the schema (readJson).
  if (unstorable(data)) return false;
  return t.schema.safeParse(data).success;
}

function unstorable(v: unknown): boolean {
  const stack = [v];
  while (stack.length) {
    const x = stack.pop();
    if (typeof x === 'string' && /\p{Cs}/u.test(x)) return true;
    if (x && typeof x === 'object') for (const [k, y] of Object.entries(x)) {
      if (k === '__proto__' || /\p{Cs}/u.test(k)) return true;
      stack.push(y);
    }
  }
  return false;
}

/**
 * Bodies the route's schema accepts but for one value that cannot be stored: an unpaired surrogate or a "__proto__"
 * key. These reached the database before readJson refused them (a CRF save answered 500; a query answer was stored
 * with "?" in place of the character; a "__proto__" item vanished from a saved draft).
 */
function nearlyValid(ids: Ids): { file: string; method: string; url: string; text: string }[] {
  const P = `/api/studies/${ids.study}/sites/${ids.site}/participants/${ids.participant}`;
  const crf = (data: string) => `{"data":${data},"intent":"draft","baseVersion":null}`;
  return [
    ...['{"AETERM":"x\\ud800"}', '{"AETERM":"\\udfffend"}', '{"x\\ud800":"a"}', '{"__proto__":{"AETERM":"x"}}', '{"AESEV":{"__proto__":1}}'].map((d, i) => ({
      file: 'studies/[study]/sites/[site]/participants/[participant]/forms/[form]/route.ts', method: 'PUT', url: `${P}/forms/adverse_event?instance=${900 + i}`, text: crf(d),
    })),
    { file: 'studies/[study]/sites/[site]/queries/[query]/answer/route.ts', method: 'POST', url: `/api/studies/${ids.study}/sites/${ids.site}/queries/${ids.query}/answer`, text: '{"text":"checked \\ud83d against source"}' },
    { file: 'studies/[study]/sites/route.ts', method: 'POST', url: `/api/studies/${ids.study}/sites`, text: '{"code":"ZS1","name":"Surrogate \\udc00 Clinic","timeZone":"UTC","recruitmentTarget":1}' },
    { file: 'studies/[study]/sites/[site]/screening/route.ts', method: 'POST', url: `/api/studies/${ids.study}/sites/${ids.site}/screening`, text: '{"screeningNumber":"S-1","screeningDate":"2026-12-01","age":40,"sex":"M","__proto__":{"admin":true}}' },
  ];
}

// ------------------------------------------------------------------ helpers
// Tables that legitimately change while the fuzzer runs, excluded from the before/after comparison:
// - access_log: the consent-download log; nothing here downloads, but it is a log by design and may grow.
// - SequelizeMeta: migration bookkeeping, never written by requests (kept out to make the list about data).
const EXCLUDED = new Set(['access_log', 'SequelizeMeta']);

async function snapshot(): Promise<Record<string, number>> {
  const tables = await rows<{ t: string }>(privDb(), 'SELECT table_name AS t FROM information_schema.tables WHERE table_schema = DATABASE() AND table_type = \'BASE TABLE\' ORDER BY table_name');
  const out: Record<string, number> = {};
  for (const { t } of tables) {
    if (EXCLUDED.has(t)) continue;
    const [r] = await rows<{ n: number | string }>(privDb(), `SELECT COUNT(*) AS n FROM \`${t}\``);
    out[t] = Number(r.n);
  }
  return out;
}

async function pool<T>(items: T[], n: number, fn: (x: T) => Promise<void>) {
  let i = 0;
  await Promise.all(Array.from({ length: n }, async () => {
    while (i < items.length) await fn(items[i++]);
  }));
}

async function send(c: Client, method: string, url: string, k: Case) {
  const headers: Record<string, string> = { accept: 'application/json' };
  if (k.contentType) headers['content-type'] = k.contentType;
  const res = await c.raw(url, { method, headers, body: k.text as BodyInit });
  const text = await res.text();
  let body: any = null;
  try {
    body = JSON.parse(text);
  } catch {}
  return { status: res.status, body, text };
}

describe('fuzzing the JSON routes', () => {
  let ids: Ids;
  beforeAll(async () => {
    ids = await fixtureIds();
  });

  it('every JSON write route of the authorisation matrix is fuzzed', () => {
    const writes = ROUTES.filter((r) => r.method !== 'GET' && !r.benchOnly).map((r) => `${r.method} ${r.file}`).filter((k) => !NOT_JSON.has(k));
    const fuzzed = TARGETS.map((t) => `${t.method} ${t.file}`);
    expect(writes.filter((w) => !fuzzed.includes(w)), 'JSON routes missing from TARGETS').toEqual([]);
    expect(fuzzed.filter((f) => !writes.includes(f)), 'TARGETS rows for routes not in the matrix').toEqual([]);
  });

  it(`≥ 5,000 invalid bodies: never a 5xx, always { error: { code, message } }, no row written (seed ${SEED})`, async () => {
    const before = await snapshot();
    const work: { t: Target; actor: Actor; url: string; k: Case }[] = [];
    for (const [i, t] of TARGETS.entries()) {
      const row = ROUTES.find((r) => r.file === t.file && r.method === t.method)!;
      // The first actor (in matrix order) the gate lets through: the fuzzer must get past the gate.
      const actor = (['anonymous', 'admin', 'data_manager', 'coordinator', 'therapist', 'assessor', 'investigator', 'monitor', 'statistician'] as Actor[]).find((a) => expected(row, a, false) === 'ok')!;
      expect(actorRole(actor).role ?? 'anonymous').toBeTruthy();
      const url = row.probe.url(ids);
      const samples = fc.sample(fc.oneof({ weight: 5, arbitrary: jsonCases(t) }, { weight: 1, arbitrary: rawCases }), { numRuns: RUNS_PER_ROUTE * 2, seed: SEED + i });
      const invalid = samples.filter((k) => !acceptedBySchema(t, k)).slice(0, RUNS_PER_ROUTE);
      expect(invalid.length, `${t.file}: not enough invalid samples`).toBe(RUNS_PER_ROUTE);
      for (const k of invalid) work.push({ t, actor, url, k });
    }
    for (const n of nearlyValid(ids)) {
      const t = TARGETS.find((x) => x.file === n.file && x.method === n.method)!;
      const row = ROUTES.find((r) => r.file === n.file && r.method === n.method)!;
      const actor = (['admin', 'data_manager', 'coordinator'] as Actor[]).find((a) => expected(row, a, false) === 'ok')!;
      work.push({ t, actor, url: n.url, k: { kind: 'unstorable value', text: n.text, contentType: 'application/json' } });
    }
    for (const a of new Set(work.map((w) => w.actor))) await clientFor(a);

    const failures: string[] = [];
    const byKind = new Map<string, Map<number, number>>();
    const started = Date.now();
    await pool(work, 4, async ({ t, actor, url, k }) => {
      const r = await send(await clientFor(actor), t.method, url, k);
      const m = byKind.get(k.kind) ?? new Map<number, number>();
      m.set(r.status, (m.get(r.status) ?? 0) + 1);
      byKind.set(k.kind, m);
      const e = r.body?.error;
      const shapeOk = e && typeof e.code === 'string' && e.code in ERROR_CODES && typeof e.message === 'string' && e.message.trim().length > 0 && ERROR_CODES[e.code as keyof typeof ERROR_CODES] === r.status;
      if (r.status >= 500 || r.status < 400 || !shapeOk) {
        const shown = Buffer.isBuffer(k.text) ? `<bytes ${k.text.toString('hex')}>` : k.text.length > 300 ? `${k.text.slice(0, 300)}… (${k.text.length} chars)` : k.text;
        failures.push(`${t.method} ${url} as ${actor} [${k.kind}, ${k.contentType}] → ${r.status} ${r.text.slice(0, 200)}\n    body: ${JSON.stringify(shown)}`);
      }
    });
    const after = await snapshot();
    const seconds = (Date.now() - started) / 1000;
    console.log(`fuzz: ${work.length} requests over ${TARGETS.length} routes in ${seconds.toFixed(1)} s (seed ${SEED})`);
    for (const [kind, m] of [...byKind].sort()) console.log(`  ${kind.padEnd(20)} ${[...m].sort().map(([s, n]) => `${s}×${n}`).join(' ')}`);
    expect(work.length).toBeGreaterThanOrEqual(5000);
    expect(failures.slice(0, 20)).toEqual([]);
    expect(after).toEqual(before);
  }, 600_000);
});
