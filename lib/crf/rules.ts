/**
 * Excursion's check language: cross-field edit checks of a form (`rules.json`), evaluated on the server.
 * The grammar is described in forms/README.md, "The check language"; this module is its reference
 * implementation.
 *
 * Semantics, in full:
 *
 * - Values. `{ item }` reads the document at a JSON Pointer; undefined and null count as missing.
 *   `{ value }` is a constant (text, number or true/false); `{ today: true }` is the site's current date
 *   from the caller's context. `add`/`sub` work on numbers only.
 * - Comparisons (`eq ne lt lte gt gte`, `between`, `in`) work on two numbers (numerically) or two dates
 *   written `YYYY-MM-DD` (as text, which orders dates correctly). `eq`/`ne` also compare two texts or two
 *   true/false values. Any other pairing (a number against a text, a date against a date-time, an object)
 *   makes the comparison not applicable.
 * - Not applicable ("n/a"): an expression that reads a missing item, or compares values of different
 *   types, is n/a, and a rule whose `assert` is n/a holds. Only `present` never yields n/a: it is the
 *   test for presence itself.
 * - Combining (three-valued, so a rule fails only when the missing items could not have made it hold):
 *     not(n/a) = n/a (holds; a missing item never turns into a violation by negation)
 *     and: false if any argument is false, else true if all are true, else n/a
 *     or:  true if any argument is true, else false if all are false, else n/a
 *     implies(c, q): true when c is false; q when c is true; when c is n/a, true if q is true, else n/a
 * - Wildcards. Every `*` in one rule binds to the same index, position by position (the first `*` of
 *   every pattern to the first index, and so on). The index combinations come from the patterns with
 *   the most `*` tokens: each is expanded over the document and their combinations are united, in
 *   ascending order. Patterns with fewer `*` take the leading indices. The rule is checked once per
 *   combination; a rule with wildcards over an empty or absent array is not checked at all.
 * - A violation names the rule and lists, in the order first read, every resolved pointer its check read.
 *
 * Evaluation is pure: no clock, no I/O; `today` comes from the caller.
 */

import { InvalidInputError, WILDCARD, expandWildcards, formatPointer, getAt, isPlainObject, parsePointer } from './pointer';

export type Scalar = string | number | boolean;
export type ItemRef = { item: string };
export type Constant = { value: Scalar };
export type Today = { today: true };
export type ComparisonOp = 'eq' | 'ne' | 'lt' | 'lte' | 'gt' | 'gte';

/** An expression that yields a value. */
export type ValueExpr =
  | ItemRef
  | Constant
  | Today
  | { op: 'add'; args: ValueExpr[] }
  | { op: 'sub'; args: [ValueExpr, ValueExpr] };

/** An expression that holds or not. */
export type Condition =
  | { op: ComparisonOp; args: [ValueExpr, ValueExpr] }
  | { op: 'and' | 'or'; args: Condition[] }
  | { op: 'not'; args: [Condition] }
  | { op: 'implies'; args: [Condition, Condition] }
  | { op: 'present'; args: [ItemRef] }
  | { op: 'between'; args: [ValueExpr, ValueExpr, ValueExpr] }
  | { op: 'in'; args: [ValueExpr, Scalar[]] };

export type Expr = ValueExpr | Condition;
export type Level = 'hard' | 'soft';
export type Rule = { id: string; level: Level; message: string; assert: Condition };
export type Violation = { ruleId: string; level: Level; message: string; items: string[] };
export type RuleContext = { today: string };

/** A rules.json that cannot be loaded; the message names the file, the rule and the problem. */
export class RulesFileError extends Error {
  constructor(message: string) {
    super(message);
    this.name = 'RulesFileError';
  }
}

const COMPARISONS: readonly ComparisonOp[] = ['eq', 'ne', 'lt', 'lte', 'gt', 'gte'];
const CONDITION_OPS = [...COMPARISONS, 'and', 'or', 'not', 'implies', 'present', 'between', 'in'] as const;
const VALUE_OPS = ['add', 'sub'] as const;
/** Every operator name of the check language. */
export const RULE_OPS: readonly string[] = [...CONDITION_OPS, ...VALUE_OPS];

const RULE_KEYS = ['id', 'level', 'message', 'assert'];
const RULE_ID = /^[A-Za-z0-9][A-Za-z0-9._-]*$/;
const DATE = /^(\d{4})-(\d{2})-(\d{2})$/;

/** True for a real calendar date written YYYY-MM-DD. */
function isIsoDate(v: unknown): v is string {
  if (typeof v !== 'string') return false;
  const m = DATE.exec(v);
  if (!m) return false;
  const [y, mo, d] = [Number(m[1]), Number(m[2]), Number(m[3])];
  if (mo < 1 || mo > 12 || d < 1) return false;
  const days = [31, y % 4 === 0 && (y % 100 !== 0 || y % 400 === 0) ? 29 : 28, 31, 30, 31, 30, 31, 31, 30, 31, 30, 31];
  return d <= days[mo - 1];
}

function isScalar(v: unknown): v is Scalar {
  return typeof v === 'string' || typeof v === 'boolean' || (typeof v === 'number' && Number.isFinite(v));
}

function show(v: unknown): string {
  if (v === undefined) return 'nothing';
  try {
    const s = JSON.stringify(v);
    return s.length > 80 ? `${s.slice(0, 77)}...` : s;
  } catch {
    return `a value of type ${typeof v}`;
  }
}

// ---------------------------------------------------------------------------
// Loading: structural check of a rules.json document
// ---------------------------------------------------------------------------

type Fail = (where: string, problem: string) => never;

function exprForm(e: unknown, where: string, fail: Fail): 'item' | 'value' | 'today' | 'op' {
  if (!isPlainObject(e)) fail(where, `expected an expression object, got ${show(e)}`);
  const obj = e as Record<string, unknown>;
  const forms = (['item', 'value', 'today', 'op'] as const).filter((k) => k in obj);
  if (forms.length !== 1) {
    fail(where, `an expression has exactly one of "item", "value", "today" or "op" (got ${show(Object.keys(obj))})`);
  }
  const form = forms[0];
  const allowed = form === 'op' ? ['op', 'args'] : [form];
  const extra = Object.keys(obj).filter((k) => !allowed.includes(k));
  if (extra.length > 0) fail(where, `unknown key ${show(extra[0])} in a "${form}" expression`);
  return form;
}

function checkItem(e: Record<string, unknown>, where: string, fail: Fail): ItemRef {
  const p = e.item;
  if (typeof p !== 'string' || p === '') fail(where, `"item" must be a JSON Pointer such as "/VISDAT" (got ${show(p)})`);
  try {
    parsePointer(p as string);
  } catch (err) {
    fail(where, (err as Error).message);
  }
  return { item: p as string };
}

function checkArgs(e: Record<string, unknown>, where: string, fail: Fail): unknown[] {
  if (!Array.isArray(e.args)) fail(where, `"${String(e.op)}" needs an "args" array (got ${show(e.args)})`);
  return e.args as unknown[];
}

function arity(op: string, args: unknown[], min: number, max: number, where: string, fail: Fail): void {
  if (args.length >= min && args.length <= max) return;
  const wanted = min === max ? `exactly ${min}` : max === Infinity ? `at least ${min}` : `${min} to ${max}`;
  fail(where, `"${op}" takes ${wanted} argument${min === 1 && max === 1 ? '' : 's'} (got ${args.length})`);
}

function checkValue(e: unknown, where: string, fail: Fail): ValueExpr {
  const form = exprForm(e, where, fail);
  const obj = e as Record<string, unknown>;
  if (form === 'item') return checkItem(obj, where, fail);
  if (form === 'value') {
    if (!isScalar(obj.value)) fail(where, `"value" must be a text, a finite number or true/false (got ${show(obj.value)})`);
    return { value: obj.value as Scalar };
  }
  if (form === 'today') {
    if (obj.today !== true) fail(where, `"today" must be written { "today": true } (got ${show(obj.today)})`);
    return { today: true };
  }
  const op = obj.op;
  if (typeof op !== 'string' || !RULE_OPS.includes(op)) {
    fail(where, `unknown op ${show(op)} (known: ${RULE_OPS.join(', ')})`);
  }
  if (!(VALUE_OPS as readonly string[]).includes(op as string)) {
    fail(where, `"${String(op)}" is a condition, but a value is needed here`);
  }
  const args = checkArgs(obj, where, fail);
  const vals = args.map((a, i) => checkValue(a, `${where}.args[${i}]`, fail));
  if (op === 'add') {
    arity('add', args, 2, Infinity, where, fail);
    return { op: 'add', args: vals };
  }
  arity('sub', args, 2, 2, where, fail);
  return { op: 'sub', args: [vals[0], vals[1]] };
}

function checkCondition(e: unknown, where: string, fail: Fail): Condition {
  const form = exprForm(e, where, fail);
  const obj = e as Record<string, unknown>;
  if (form !== 'op') {
    fail(where, `a "${form}" expression is a value, but a condition is needed here (compare it with eq, ne, lt, lte, gt, gte, or test it with present)`);
  }
  const op = obj.op;
  if (typeof op !== 'string' || !RULE_OPS.includes(op)) {
    fail(where, `unknown op ${show(op)} (known: ${RULE_OPS.join(', ')})`);
  }
  if ((VALUE_OPS as readonly string[]).includes(op as string)) {
    fail(where, `"${String(op)}" yields a number, but a condition is needed here`);
  }
  const args = checkArgs(obj, where, fail);
  const at = (i: number) => `${where}.args[${i}]`;
  switch (op as (typeof CONDITION_OPS)[number]) {
    case 'eq':
    case 'ne':
    case 'lt':
    case 'lte':
    case 'gt':
    case 'gte':
      arity(op as string, args, 2, 2, where, fail);
      return { op: op as ComparisonOp, args: [checkValue(args[0], at(0), fail), checkValue(args[1], at(1), fail)] };
    case 'and':
    case 'or':
      arity(op as string, args, 2, Infinity, where, fail);
      return { op: op as 'and' | 'or', args: args.map((a, i) => checkCondition(a, at(i), fail)) };
    case 'not':
      arity('not', args, 1, 1, where, fail);
      return { op: 'not', args: [checkCondition(args[0], at(0), fail)] };
    case 'implies':
      arity('implies', args, 2, 2, where, fail);
      return { op: 'implies', args: [checkCondition(args[0], at(0), fail), checkCondition(args[1], at(1), fail)] };
    case 'present': {
      arity('present', args, 1, 1, where, fail);
      const form0 = exprForm(args[0], at(0), fail);
      if (form0 !== 'item') fail(at(0), `"present" tests an item, so its argument must be { "item": "/..." } (got a "${form0}" expression)`);
      return { op: 'present', args: [checkItem(args[0] as Record<string, unknown>, at(0), fail)] };
    }
    case 'between':
      arity('between', args, 3, 3, where, fail);
      return {
        op: 'between',
        args: [checkValue(args[0], at(0), fail), checkValue(args[1], at(1), fail), checkValue(args[2], at(2), fail)],
      };
    case 'in': {
      arity('in', args, 2, 2, where, fail);
      const x = checkValue(args[0], at(0), fail);
      const list = args[1];
      if (!Array.isArray(list) || list.length === 0) {
        fail(at(1), `"in" needs a non-empty list of constants as its second argument, e.g. ["Y", "N"] (got ${show(list)})`);
      }
      const bad = (list as unknown[]).findIndex((v) => !isScalar(v));
      if (bad >= 0) fail(`${at(1)}[${bad}]`, `the list of "in" may hold only texts, finite numbers and true/false (got ${show((list as unknown[])[bad])})`);
      return { op: 'in', args: [x, [...(list as Scalar[])]] };
    }
  }
}

/** Checks the structure of a rules.json document and returns its rules, or throws naming the file, rule and problem. */
export function validateRules(rules: unknown, file: string): Rule[] {
  const fail = (where: string, problem: string): never => {
    throw new RulesFileError(`${file}: ${where}: ${problem}.`);
  };
  if (!isPlainObject(rules)) fail('the document', `must be an object of the form { "rules": [ ... ] } (got ${show(rules)})`);
  const root = rules as Record<string, unknown>;
  const extraRoot = Object.keys(root).filter((k) => k !== 'rules');
  if (extraRoot.length > 0) fail('the document', `unknown key ${show(extraRoot[0])}; only "rules" is allowed`);
  if (!Array.isArray(root.rules)) fail('the document', `"rules" must be an array (got ${show(root.rules)})`);

  const seen = new Set<string>();
  return (root.rules as unknown[]).map((r, i): Rule => {
    const pos = `rule #${i + 1}`;
    if (!isPlainObject(r)) return fail(pos, `must be an object with id, level, message and assert (got ${show(r)})`);
    const id = r.id;
    if (typeof id !== 'string' || !RULE_ID.test(id)) {
      fail(pos, `"id" must be a name of letters, digits, ".", "_" or "-" such as "repair-not-before-injury" (got ${show(id)})`);
    }
    const name = `rule "${id as string}"`;
    if (seen.has(id as string)) fail(name, `the id is used by more than one rule; ids must be unique`);
    seen.add(id as string);
    const extra = Object.keys(r).filter((k) => !RULE_KEYS.includes(k));
    if (extra.length > 0) fail(name, `unknown key ${show(extra[0])}; a rule has only ${RULE_KEYS.join(', ')}`);
    if (r.level !== 'hard' && r.level !== 'soft') fail(name, `"level" must be "hard" or "soft" (got ${show(r.level)})`);
    if (typeof r.message !== 'string' || r.message.trim() === '') {
      fail(name, `"message" must be a non-empty text shown to the person entering data (got ${show(r.message)})`);
    }
    if (!('assert' in r)) fail(name, `"assert" is missing`);
    const assert = checkCondition(r.assert, 'assert', (where, problem) => fail(`${name}, ${where}`, problem));
    return { id: id as string, level: r.level as Level, message: r.message as string, assert };
  });
}

// ---------------------------------------------------------------------------
// Evaluation
// ---------------------------------------------------------------------------

/** A value, or not applicable (a missing item, or arithmetic on a non-number). */
type Val = { na: true } | { na: false; v: unknown };
/** A condition's outcome; 'na' holds, only false is a violation. */
type Truth = boolean | 'na';

const NA: Val = { na: true };

type Env = {
  doc: unknown;
  today: string;
  resolve: (pattern: string) => string;
  read: (pointer: string) => void;
};

function itemsOf(e: Expr | Scalar[], out: string[]): void {
  if (Array.isArray(e)) return;
  if ('item' in e) out.push(e.item);
  else if ('op' in e) for (const a of e.args) itemsOf(a as Expr | Scalar[], out);
}

function evalValue(e: ValueExpr, env: Env): Val {
  if ('item' in e) {
    const p = env.resolve(e.item);
    env.read(p);
    const v = getAt(env.doc, p);
    return v === undefined || v === null ? NA : { na: false, v };
  }
  if ('value' in e) return { na: false, v: e.value };
  if ('today' in e) return { na: false, v: env.today };
  // Every argument is evaluated (no short cut) so that the violation lists every item the check reads.
  const vals = e.args.map((a) => evalValue(a, env));
  const nums: number[] = [];
  for (const x of vals) {
    if (x.na || typeof x.v !== 'number' || !Number.isFinite(x.v)) return NA;
    nums.push(x.v);
  }
  if (e.op === 'add') return { na: false, v: nums.reduce((s, n) => s + n, 0) };
  if (e.op === 'sub') return { na: false, v: nums[0] - nums[1] };
  throw new InvalidInputError(`Unknown value operator ${show((e as { op: unknown }).op)} in a check; load rules with validateRules.`);
}

/** -1, 0 or 1 when a and b are comparable in order (two numbers, or two YYYY-MM-DD dates); else null. */
function order(a: unknown, b: unknown): number | null {
  if (typeof a === 'number' && typeof b === 'number') return a < b ? -1 : a > b ? 1 : 0;
  // Dates in YYYY-MM-DD order as text; other texts (codes, date-times) have no order here.
  if (isIsoDate(a) && isIsoDate(b)) return a < b ? -1 : a > b ? 1 : 0;
  return null;
}

function sameType(a: unknown, b: unknown): boolean {
  return isScalar(a) && isScalar(b) && typeof a === typeof b;
}

function compare(op: ComparisonOp, x: Val, y: Val): Truth {
  if (x.na || y.na) return 'na';
  if (op === 'eq' || op === 'ne') {
    if (!sameType(x.v, y.v)) return 'na';
    return (x.v === y.v) === (op === 'eq');
  }
  const c = order(x.v, y.v);
  if (c === null) return 'na';
  switch (op) {
    case 'lt':
      return c < 0;
    case 'lte':
      return c <= 0;
    case 'gt':
      return c > 0;
    case 'gte':
      return c >= 0;
  }
}

function evalCond(e: Condition, env: Env): Truth {
  switch (e.op) {
    case 'eq':
    case 'ne':
    case 'lt':
    case 'lte':
    case 'gt':
    case 'gte': {
      const [x, y] = e.args.map((a) => evalValue(a, env));
      return compare(e.op, x, y);
    }
    case 'and': {
      const ts = e.args.map((a) => evalCond(a, env));
      if (ts.includes(false)) return false;
      return ts.every((t) => t === true) ? true : 'na';
    }
    case 'or': {
      const ts = e.args.map((a) => evalCond(a, env));
      if (ts.includes(true)) return true;
      return ts.every((t) => t === false) ? false : 'na';
    }
    case 'not': {
      const t = evalCond(e.args[0], env);
      // not(n/a) stays n/a: negating a check on a missing item must not create a violation.
      return t === 'na' ? 'na' : !t;
    }
    case 'implies': {
      const c = evalCond(e.args[0], env);
      const q = evalCond(e.args[1], env);
      if (c === false) return true;
      if (c === true) return q;
      return q === true ? true : 'na';
    }
    case 'present': {
      const p = env.resolve(e.args[0].item);
      env.read(p);
      const v = getAt(env.doc, p);
      return v !== undefined && v !== null;
    }
    case 'between': {
      const [x, lo, hi] = e.args.map((a) => evalValue(a, env));
      if (x.na || lo.na || hi.na) return 'na';
      // Both orders exist only if low, x and high are all numbers or all dates.
      const a = order(lo.v, x.v);
      const b = order(x.v, hi.v);
      if (a === null || b === null) return 'na';
      return a <= 0 && b <= 0;
    }
    case 'in': {
      const x = evalValue(e.args[0], env);
      if (x.na || !isScalar(x.v)) return 'na';
      const candidates = e.args[1].filter((v) => typeof v === typeof x.v);
      // A list with nothing of x's type cannot be compared with x: not applicable, like any type mismatch.
      if (candidates.length === 0) return 'na';
      return candidates.includes(x.v);
    }
    default:
      throw new InvalidInputError(`Unknown operator ${show((e as { op: unknown }).op)} in a check; load rules with validateRules.`);
  }
}

/** The index combinations a rule is checked for: [[]] without wildcards. */
function bindingsOf(patterns: string[][], doc: unknown): number[][] {
  const stars = patterns.map((t) => t.filter((x) => x === WILDCARD).length);
  const most = Math.max(0, ...stars);
  if (most === 0) return [[]];
  const seen = new Map<string, number[]>();
  patterns.forEach((tokens, i) => {
    if (stars[i] !== most) return;
    for (const { bindings } of expandWildcards(doc, formatPointer(tokens))) seen.set(bindings.join(','), bindings);
  });
  return [...seen.values()].sort((a, b) => {
    for (let k = 0; k < a.length; k++) if (a[k] !== b[k]) return a[k] - b[k];
    return 0;
  });
}

/** The pointer a pattern names for one binding: the k-th `*` becomes the k-th index. */
function substitute(tokens: string[], binding: number[]): string {
  let k = 0;
  return formatPointer(tokens.map((t) => (t === WILDCARD ? binding[k++] : t)));
}

/** Evaluates the rules against a document and returns one violation per rule and wildcard binding that fails. */
export function evaluateRules(rules: Rule[], doc: unknown, ctx: RuleContext): Violation[] {
  if (!ctx || !isIsoDate(ctx.today)) {
    throw new InvalidInputError(`The site's current date must be a date written YYYY-MM-DD (got ${show(ctx?.today)}).`);
  }
  const out: Violation[] = [];
  for (const rule of rules) {
    const patterns: string[] = [];
    itemsOf(rule.assert, patterns);
    const unique = [...new Set(patterns)];
    const parsed = new Map(unique.map((p) => [p, parsePointer(p)]));
    for (const binding of bindingsOf([...parsed.values()], doc)) {
      const read: string[] = [];
      const env: Env = {
        doc,
        today: ctx.today,
        resolve: (p) => substitute(parsed.get(p) ?? parsePointer(p), binding),
        read: (p) => {
          if (!read.includes(p)) read.push(p);
        },
      };
      if (evalCond(rule.assert, env) === false) {
        out.push({ ruleId: rule.id, level: rule.level, message: rule.message, items: read });
      }
    }
  }
  return out;
}
