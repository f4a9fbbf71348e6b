import 'server-only';
import { randomUUID } from 'node:crypto';
import { NextResponse, type NextRequest } from 'next/server';
import type { z } from 'zod';
import { AppError, type ErrorCode } from '@/lib/errors';
import { logger } from '@/lib/log';
import { loadPrincipal, rolesIn, type Principal } from '@/lib/auth/principal';
import { issueSessionToken, readSessionToken, sessionCookieName, sessionCookieOptions } from '@/lib/auth/session';
import { isDbUnavailable } from '@/lib/http/db-errors';
import { Site, Study } from '@/models';
import type { Role } from '@/lib/roles';
import { assertWritable, type WriteKind } from '@/lib/lock';

type Params = Record<string, string | string[] | undefined>;
type RouteContext = { params: Promise<Params> };

/** What a handler behind withAuth receives: the parsed principal, scope and request id. */
export type AuthedContext<P extends Params = Params> = {
  req: NextRequest;
  params: P;
  principal: Principal;
  requestId: string;
  /** Present for study- and site-scoped routes. */
  study: Study | null;
  /** Present for site-scoped routes. */
  site: Site | null;
  /** The principal's roles in this scope that are among the allowed ones. */
  roles: Role[];
};

export type PublicContext<P extends Params = Params> = { req: NextRequest; params: P; requestId: string };

/** The error answer every route gives: `{ error: { code, message, fields? } }`. */
export function errorResponse(code: ErrorCode, status: number, message: string, requestId: string, extra: Record<string, unknown> = {}) {
  return NextResponse.json({ error: { code, message, ...extra, requestId } }, { status, headers: { 'x-request-id': requestId, 'cache-control': 'no-store' } });
}

/** Maps any thrown value to the catalogue; unknown errors are logged with the request id and answered 500. */
export function toErrorResponse(err: unknown, requestId: string): NextResponse {
  if (err instanceof AppError) {
    return errorResponse(err.code, err.status, err.message, requestId, { ...(err.fields ? { fields: err.fields } : {}), ...(err.details ?? {}) });
  }
  if ((err as { code?: string })?.code === 'invalid_input' && err instanceof Error) {
    return errorResponse('invalid_input', 400, err.message, requestId);
  }
  if (isDbUnavailable(err)) {
    logger.warn({ requestId, err: String(err) }, 'database unavailable');
    return errorResponse('db_unavailable', 503, 'The database is not reachable at the moment. Nothing was saved; try again in a few seconds.', requestId);
  }
  logger.error({ requestId, err: err instanceof Error ? { name: err.name, message: err.message, stack: err.stack } : String(err) }, 'unhandled error');
  return errorResponse('internal', 500, `Something went wrong on the server. Quote this reference if you report it: ${requestId}`, requestId);
}

function asResponse(v: unknown, requestId: string): NextResponse {
  if (v instanceof NextResponse) return v;
  if (v instanceof Response) return new NextResponse(v.body, v);
  const res = NextResponse.json(v ?? { ok: true }, { headers: { 'cache-control': 'no-store' } });
  res.headers.set('x-request-id', requestId);
  return res;
}

const SAFE_METHODS = new Set(['GET', 'HEAD', 'OPTIONS']);

/** Refuses state-changing requests that a browser sent from another site (CSRF). */
function checkSameOrigin(req: NextRequest) {
  if (SAFE_METHODS.has(req.method)) return;
  const site = req.headers.get('sec-fetch-site');
  if (site && site !== 'same-origin' && site !== 'none') throw new AppError('forbidden', 'Requests from other sites are refused.');
  const origin = req.headers.get('origin');
  if (origin && origin !== 'null') {
    const host = req.headers.get('host');
    let o: URL;
    try {
      o = new URL(origin);
    } catch {
      throw new AppError('forbidden', 'Requests from other sites are refused.');
    }
    if (o.host !== host) throw new AppError('forbidden', 'Requests from other sites are refused.');
  }
}

/** A route handler open to anyone (sign-in helpers, health, invitation acceptance). */
export function withPublic<P extends Params = Params>(handler: (ctx: PublicContext<P>) => Promise<unknown>) {
  return async (req: NextRequest, context: RouteContext): Promise<NextResponse> => {
    const requestId = randomUUID();
    try {
      checkSameOrigin(req);
      const params = ((await context?.params) ?? {}) as P;
      return asResponse(await handler({ req, params, requestId }), requestId);
    } catch (err) {
      return toErrorResponse(err, requestId);
    }
  };
}

export type AuthOptions = {
  /** Roles allowed in the scope, or 'any' for any signed-in user (scope 'user') or any member (study/site). */
  roles: readonly Role[] | 'any';
  /** 'user': no study in the URL; 'study': `[study]` segment; 'site': `[study]` and `[site]` segments. */
  scope: 'user' | 'study' | 'site';
  /**
   * What the database lock checks before the handler runs (lib/lock): 'entry' (refused from a soft lock on), 'query'
   * and 'admin' (refused by a hard lock), 'none' (not checked: the lock routes). Default: 'entry' for state-changing
   * methods of study and site routes, 'none' for GET/HEAD/OPTIONS and user-scoped routes.
   */
  lock?: WriteKind | 'none';
};

/** The lock check a route gets for this method when it does not say otherwise. */
export function lockKindFor(method: string, opts: Pick<AuthOptions, 'scope' | 'lock'>): WriteKind | 'none' {
  if (opts.lock) return opts.lock;
  return SAFE_METHODS.has(method) || opts.scope === 'user' ? 'none' : 'entry';
}

/**
 * Wraps a route handler: request id, CSRF check, session (401), membership for the study and site in
 * the URL with one of the allowed roles (403), error catalogue. The session slides on every call.
 */
export function withAuth<P extends Params = Params>(handler: (ctx: AuthedContext<P>) => Promise<unknown>, opts: AuthOptions) {
  return async (req: NextRequest, context: RouteContext): Promise<NextResponse> => {
    const requestId = randomUUID();
    try {
      checkSameOrigin(req);
      const userId = await readSessionToken(req.cookies.get(sessionCookieName())?.value);
      if (!userId) throw new AppError('unauthenticated', 'Sign in to continue (your session may have ended after 30 minutes without activity).');
      const principal = await loadPrincipal(userId);
      if (!principal) throw new AppError('unauthenticated', 'Your account is not active. Ask your administrator.');
      const params = ((await context?.params) ?? {}) as P;
      let study: Study | null = null;
      let site: Site | null = null;
      let roles: Role[] = [];
      if (opts.scope !== 'user') {
        const code = String(params.study ?? '');
        study = await Study.findOne({ where: { code } });
        const inStudy = study ? rolesIn(principal, study.id) : [];
        if (!study || inStudy.length === 0) throw new AppError(study ? 'forbidden' : 'not_found', study ? 'You are not a member of this study.' : 'The study was not found.');
        if (opts.scope === 'site') {
          site = await Site.findOne({ where: { studyId: study.id, code: String(params.site ?? '') } });
          if (!site) throw new AppError('not_found', 'The site was not found in this study.');
          roles = rolesIn(principal, study.id, site.id);
        } else {
          roles = inStudy;
        }
        if (opts.roles !== 'any') roles = roles.filter((r) => (opts.roles as readonly Role[]).includes(r));
        if (roles.length === 0) {
          throw new AppError('forbidden', site ? `Your role at ${site.code} does not allow this.` : 'Your role in this study does not allow this.');
        }
        const kind = lockKindFor(req.method, opts);
        if (kind !== 'none') await assertWritable(study.id, site?.id ?? null, kind);
      }
      const res = asResponse(await handler({ req, params, principal, requestId, study, site, roles }), requestId);
      res.cookies.set(sessionCookieName(), await issueSessionToken(userId), sessionCookieOptions());
      return res;
    } catch (err) {
      return toErrorResponse(err, requestId);
    }
  };
}

/** Largest JSON body accepted unless a route says otherwise. */
export const DEFAULT_BODY_LIMIT = 64 * 1024;

/**
 * Reads and validates a JSON body before anything else runs: size (413), content type (415),
 * syntax (400 malformed_json), schema with unknown fields refused (400 validation_failed, per field).
 */
export async function readJson<S extends z.ZodType>(req: Request, schema: S, opts: { maxBytes?: number } = {}): Promise<z.infer<S>> {
  const max = opts.maxBytes ?? DEFAULT_BODY_LIMIT;
  const type = req.headers.get('content-type') ?? '';
  if (!/^application\/json\b/i.test(type)) throw new AppError('unsupported_media_type', 'Send the request body as JSON (Content-Type: application/json).');
  const declared = Number(req.headers.get('content-length') ?? NaN);
  if (Number.isFinite(declared) && declared > max) throw tooLarge(max);
  const text = await readLimited(req, max);
  let data: unknown;
  try {
    data = JSON.parse(text);
  } catch (e) {
    throw new AppError('malformed_json', `The request body is not valid JSON (${(e as Error).message}).`);
  }
  // A lone UTF-16 surrogate ("\ud800" in JSON) cannot be stored in utf8mb4: MariaDB refuses it in JSON columns (500)
  // and turns it into "?" in text columns. A "__proto__" key is dropped without a word by every object copy, so its
  // value would be lost silently. Both are refused here, naming the field.
  const broken = firstUnstorable(data);
  if (broken) {
    const where = (broken.path || '(body)').slice(0, 200);
    throw new AppError('validation_failed', `Some fields cannot be stored: ${where} ${broken.why}.`, { fields: { [where]: broken.fix } });
  }
  const parsed = schema.safeParse(data);
  if (!parsed.success) {
    const fields: Record<string, string> = {};
    for (const issue of parsed.error.issues) {
      if (issue.code === 'unrecognized_keys') {
        for (const k of issue.keys) fields[[...issue.path, k].join('.')] = 'This field is not allowed here.';
      } else {
        fields[issue.path.join('.') || '(body)'] = friendly(issue);
      }
    }
    const names = Object.keys(fields);
    throw new AppError('validation_failed', `Some fields need attention: ${names.slice(0, 5).join(', ')}${names.length > 5 ? ' …' : ''}.`, { fields });
  }
  return parsed.data;
}

const LONE_SURROGATE = /\p{Cs}/u;

/**
 * The first string (value or key) holding an unpaired surrogate, or key named __proto__, with its dotted path
 * ('' for the body itself); null when there is none. Iterative, because a body may nest thousands of levels deep.
 */
function firstUnstorable(data: unknown): { path: string; why: string; fix: string } | null {
  const surrogate = (path: string) => ({ path, why: 'holds a broken character (an unpaired surrogate)', fix: 'Remove the broken character.' });
  // Paths are kept as linked segments and only joined on a hit, so deep bodies cost linear memory.
  type Seg = { key: string; up: Seg | null } | null;
  const join = (s: Seg) => {
    const parts: string[] = [];
    for (let p = s; p; p = p.up) parts.push(p.key);
    return parts.reverse().join('.');
  };
  const stack: [unknown, Seg][] = [[data, null]];
  while (stack.length) {
    const [v, at] = stack.pop()!;
    if (typeof v === 'string') {
      if (LONE_SURROGATE.test(v)) return surrogate(join(at));
    } else if (v && typeof v === 'object') {
      for (const [k, x] of Object.entries(v)) {
        const seg = { key: k, up: at };
        if (LONE_SURROGATE.test(k)) return surrogate(join(seg));
        if (k === '__proto__') return { path: join(seg), why: 'is a name that cannot be used', fix: 'This field is not allowed here.' };
        stack.push([x, seg]);
      }
    }
  }
  return null;
}

// zod's default wording names types; people need to know what to do.
function friendly(issue: z.core.$ZodIssue): string {
  if (issue.code === 'invalid_type') {
    if (/received undefined$/.test(issue.message)) return 'This field is required.';
    return `Expected ${issue.expected === 'int' ? 'a whole number' : `a ${issue.expected}`} here.`;
  }
  return issue.message;
}

function tooLarge(max: number) {
  return new AppError('payload_too_large', `The request body is larger than the ${Math.round(max / 1024)} kB this route accepts.`);
}

async function readLimited(req: Request, max: number): Promise<string> {
  return (await readBytes(req, max)).toString('utf8');
}

/** Reads a raw body, refusing it (413) as soon as it grows past `max` bytes, declared or actual. */
export async function readBytes(req: Request, max: number, tooLargeMessage?: string): Promise<Buffer> {
  const fail = () => (tooLargeMessage ? new AppError('payload_too_large', tooLargeMessage) : tooLarge(max));
  const declared = Number(req.headers.get('content-length') ?? NaN);
  if (Number.isFinite(declared) && declared > max) throw fail();
  if (!req.body) return Buffer.alloc(0);
  const reader = req.body.getReader();
  const chunks: Uint8Array[] = [];
  let size = 0;
  for (;;) {
    const { done, value } = await reader.read();
    if (done) break;
    size += value.byteLength;
    if (size > max) {
      await reader.cancel();
      throw fail();
    }
    chunks.push(value);
  }
  return Buffer.concat(chunks);
}

/** Parses `page` and `pageSize` query parameters with sane bounds. */
export function paging(req: NextRequest, defaults = { pageSize: 25 }) {
  const sp = req.nextUrl.searchParams;
  const page = Math.max(1, Math.min(100_000, Number.parseInt(sp.get('page') ?? '1', 10) || 1));
  const pageSize = Math.max(1, Math.min(200, Number.parseInt(sp.get('pageSize') ?? String(defaults.pageSize), 10) || defaults.pageSize));
  return { page, pageSize, offset: (page - 1) * pageSize, limit: pageSize };
}
