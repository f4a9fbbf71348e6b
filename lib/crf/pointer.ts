/**
 * JSON Pointer helpers (RFC 6901) for case report form documents.
 *
 * A pointer is '' (the whole document) or a sequence of '/'-prefixed tokens, where '~1' stands for '/'
 * and '~0' for '~' inside a token. Arrays are addressed by decimal index without leading zeros.
 *
 * The check language adds one thing on top: a token that is exactly `*` in a pattern ranges over the
 * indices of the array at that place (`expandWildcards`). RFC 6901 has no way to escape `*`, so an object
 * key that is literally `*` cannot be addressed by a rule pattern; `getAt` still reads it literally.
 */

/** Raised for input a person must correct; the API layer maps it to HTTP 400. */
export class InvalidInputError extends Error {
  code = 'invalid_input' as const;
  constructor(message: string) {
    super(message);
    this.name = 'InvalidInputError';
  }
}

/** The wildcard token of rule patterns. */
export const WILDCARD = '*';

const ARRAY_INDEX = /^(0|[1-9][0-9]*)$/;

function unescapeToken(token: string, pointer: string): string {
  // '~' must be followed by 0 or 1; anything else is a malformed pointer (RFC 6901 section 3).
  if (/~(?![01])/.test(token)) {
    throw new InvalidInputError(
      `The JSON Pointer "${pointer}" has a "~" that is not followed by 0 or 1 (write "~0" for "~" and "~1" for "/").`,
    );
  }
  // Order matters: '~01' must become '~1', so '~1' is replaced before '~0' (RFC 6901 section 4).
  return token.replace(/~1/g, '/').replace(/~0/g, '~');
}

/** Splits a JSON Pointer into its unescaped reference tokens; '' (the whole document) gives []. */
export function parsePointer(p: string): string[] {
  if (typeof p !== 'string') {
    throw new InvalidInputError(`A JSON Pointer must be text (got a value of type ${p === null ? 'null' : typeof p}).`);
  }
  if (p === '') return [];
  if (!p.startsWith('/')) {
    throw new InvalidInputError(`The JSON Pointer "${p}" must be empty or start with "/".`);
  }
  return p.slice(1).split('/').map((t) => unescapeToken(t, p));
}

/** Joins reference tokens into a JSON Pointer, escaping '~' and '/' inside each token. */
export function formatPointer(tokens: (string | number)[]): string {
  let out = '';
  for (const t of tokens) {
    if (typeof t === 'number') {
      if (!Number.isSafeInteger(t) || t < 0) {
        throw new InvalidInputError(`An array index in a JSON Pointer must be a whole number of zero or more (got ${t}).`);
      }
      out += `/${t}`;
    } else if (typeof t === 'string') {
      // '~' first, otherwise the '~' introduced by '~1' would itself be escaped.
      out += `/${t.replace(/~/g, '~0').replace(/\//g, '~1')}`;
    } else {
      throw new InvalidInputError(`A JSON Pointer token must be text or an array index (got a value of type ${typeof t}).`);
    }
  }
  return out;
}

/** True for objects made by JSON.parse or an object literal (not arrays, dates or class instances). */
export function isPlainObject(v: unknown): v is Record<string, unknown> {
  if (v === null || typeof v !== 'object' || Array.isArray(v)) return false;
  const proto = Object.getPrototypeOf(v);
  return proto === Object.prototype || proto === null;
}

function step(node: unknown, token: string): unknown {
  if (Array.isArray(node)) {
    // '-' (one past the end) and indices with leading zeros never name an existing element.
    if (!ARRAY_INDEX.test(token)) return undefined;
    const i = Number(token);
    return i < node.length ? node[i] : undefined;
  }
  if (isPlainObject(node)) {
    // Own keys only, so "__proto__" or "constructor" never reach the prototype.
    return Object.prototype.hasOwnProperty.call(node, token) ? node[token] : undefined;
  }
  return undefined;
}

/** The value at a JSON Pointer, or undefined when any part of the path is absent. */
export function getAt(doc: unknown, pointer: string): unknown {
  let node = doc;
  for (const token of parsePointer(pointer)) {
    node = step(node, token);
    if (node === undefined) return undefined;
  }
  return node;
}

/** One concrete pointer of a wildcard pattern, with the array index chosen for each `*` in order. */
export type Expansion = { pointer: string; bindings: number[] };

/**
 * Expands every `*` token of a pattern over the array indices that exist at that place in the document,
 * in ascending order (nested wildcards give the cartesian product, outer index first); a `*` on a
 * non-array yields nothing. Tokens after the last `*` need not exist: a pattern ending in a row's item gives
 * one pointer per row even when that row lacks the item, so a rule can tell that the item is missing.
 * A pattern without `*` always gives exactly itself.
 */
export function expandWildcards(doc: unknown, pattern: string): Expansion[] {
  const tokens = parsePointer(pattern);
  const out: Expansion[] = [];
  const walk = (node: unknown, at: number, path: (string | number)[], bindings: number[]): void => {
    if (at === tokens.length) {
      out.push({ pointer: formatPointer(path), bindings });
      return;
    }
    const token = tokens[at];
    if (token === WILDCARD) {
      if (!Array.isArray(node)) return;
      for (let i = 0; i < node.length; i++) walk(node[i], at + 1, [...path, i], [...bindings, i]);
      return;
    }
    walk(step(node, token), at + 1, [...path, token], bindings);
  };
  walk(doc, 0, [], []);
  return out;
}
