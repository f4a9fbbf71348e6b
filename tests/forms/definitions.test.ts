import { describe, it, expect } from 'vitest';
import { existsSync, readdirSync, readFileSync, statSync } from 'node:fs';
import path from 'node:path';
import type { ValidateFunction } from 'ajv';
import { compileOrExplain, createAjv, itemErrors } from '@/lib/crf/ajv';

// Every form folder in forms/ is checked as data: the three files, the examples, and the rules'
// structure. The rule evaluator has tests of its own; here only the rules' shape and the items they
// name are checked, so a typo in a pointer is caught before a study ever loads the form.

type Json = Record<string, unknown>;

const FORMS_DIR = path.resolve(__dirname, '../../forms');
const ACCESS = ['all', 'unblinded', 'assessor'];
const UNITS = ['degrees', 'kg', 'minutes', 'hours', 'years', 'points', '%'];
// Stock RJSF widgets; our own widgets are named `ex:*` (forms/README.md) and registered by the form renderer.
const WIDGETS = ['radio', 'select', 'textarea', 'text', 'updown', 'range', 'checkbox', 'checkboxes', 'date', 'time', 'date-time', 'email', 'uri', 'hidden'];
const isKnownWidget = (w: unknown) => typeof w === 'string' && (WIDGETS.includes(w) || /^ex:[a-z][a-z0-9-]*$/.test(w));

const isObj = (v: unknown): v is Json => typeof v === 'object' && v !== null && !Array.isArray(v);

function readJson(file: string): Json {
  const rel = path.relative(path.resolve(FORMS_DIR, '..'), file);
  let text: string;
  try {
    text = readFileSync(file, 'utf8');
  } catch {
    throw new Error(`${rel} is missing.`);
  }
  try {
    const v: unknown = JSON.parse(text);
    if (!isObj(v)) throw new Error('the top level must be an object');
    return v;
  } catch (e) {
    throw new Error(`${rel} is not valid JSON: ${(e as Error).message}`);
  }
}

/** The operator names listed in forms/README.md, section "The check language" ("with NAME one of …"). */
function readmeOps(): string[] {
  const text = readFileSync(path.join(FORMS_DIR, 'README.md'), 'utf8');
  const start = text.indexOf('with NAME one of');
  const end = text.indexOf('- An expression that reads', start);
  if (start < 0 || end < 0) throw new Error('forms/README.md no longer lists the operators where this test expects them.');
  const spans = [...text.slice(start, end).matchAll(/`([^`]+)`/g)].map((m) => m[1]);
  return spans.flatMap((s) => s.split(/\s+/)).filter((w) => /^[a-z]+$/.test(w));
}

function parsePointer(p: string): string[] {
  if (p === '') return [];
  if (!p.startsWith('/')) throw new Error(`"${p}" is not a JSON Pointer (it must start with "/").`);
  return p.slice(1).split('/').map((t) => t.replace(/~1/g, '/').replace(/~0/g, '~'));
}

/** The schemas a pointer names (several for a wildcard over a tuple); none when it names nothing. */
function nodesAt(schema: Json, tokens: string[]): Json[] {
  if (tokens.length === 0) return [schema];
  const [head, ...rest] = tokens;
  const isIndex = /^(0|[1-9][0-9]*)$/.test(head);
  if (schema.type === 'array') {
    const items = schema.items;
    if (Array.isArray(items)) {
      // A wildcard over a tuple must make sense for every position it can bind to.
      if (head === '*') {
        const all = items.map((s) => (isObj(s) ? nodesAt(s, rest) : []));
        return all.length > 0 && all.every((n) => n.length > 0) ? all.flat() : [];
      }
      const i = isIndex ? Number(head) : -1;
      return i >= 0 && i < items.length && isObj(items[i]) ? nodesAt(items[i] as Json, rest) : [];
    }
    if (!isObj(items) || (head !== '*' && !isIndex)) return [];
    if (head !== '*' && typeof schema.maxItems === 'number' && Number(head) >= schema.maxItems) return [];
    return nodesAt(items, rest);
  }
  const props = schema.properties;
  if (!isObj(props) || !isObj(props[head])) return [];
  return nodesAt(props[head] as Json, rest);
}

/** True when the pointer names an item of the schema; `*` and indices step into array items (tuples included). */
function pointerExists(schema: Json, tokens: string[]): boolean {
  return nodesAt(schema, tokens).length > 0;
}

/** The codes of a coded item (its oneOf consts), or undefined for an item without a code list. */
function codesOf(node: Json): unknown[] | undefined {
  if (!Array.isArray(node.oneOf) || !node.oneOf.every((b) => isObj(b) && 'const' in b)) return undefined;
  return node.oneOf.map((b) => (b as Json).const);
}

/** What an item holds, as far as ordering goes: numbers, dates (YYYY-MM-DD), or something without an order here. */
function orderKind(node: Json): 'number' | 'date' | 'other' {
  const types = Array.isArray(node.type) ? node.type : [node.type];
  if (types.includes('number') || types.includes('integer')) return 'number';
  if (types.includes('string') && node.format === 'date') return 'date';
  return 'other';
}

/** Checks the constants and the kinds of values an operator compares against the items it reads. */
function comparisonProblems(e: Json, at: string, schema: Json, out: string[]): void {
  const args = Array.isArray(e.args) ? e.args : [];
  const itemNodes = (a: unknown): Json[] => {
    if (!isObj(a) || typeof a.item !== 'string') return [];
    try {
      return nodesAt(schema, parsePointer(a.item));
    } catch {
      return [];
    }
  };
  const checkCode = (item: unknown, value: unknown) => {
    for (const node of itemNodes(item)) {
      const codes = codesOf(node);
      if (codes && !codes.includes(value)) out.push(`${at}: ${JSON.stringify(value)} is not a code of ${(item as Json).item} (codes: ${codes.map((c) => JSON.stringify(c)).join(', ')})`);
    }
  };
  if (e.op === 'eq' || e.op === 'ne') {
    const [a, b] = args;
    if (isObj(b) && 'value' in b) checkCode(a, b.value);
    if (isObj(a) && 'value' in a) checkCode(b, a.value);
  }
  if (e.op === 'in' && Array.isArray(args[1])) for (const v of args[1]) checkCode(args[0], v);
  if (['lt', 'lte', 'gt', 'gte', 'between'].includes(String(e.op))) {
    // The evaluator orders only numbers and YYYY-MM-DD dates; anything else makes the rule silently not applicable.
    const withToday = args.some((a) => isObj(a) && 'today' in a);
    for (const a of args) {
      for (const node of itemNodes(a)) {
        const kind = orderKind(node);
        if (kind === 'other') out.push(`${at}: "${String(e.op)}" orders numbers or dates, but ${(a as Json).item} is neither`);
        else if (withToday && kind !== 'date') out.push(`${at}: ${(a as Json).item} is compared with today's date but is not a date`);
      }
    }
  }
}

type RuleProblem = string;

/** Walks a rule expression and lists every problem: unknown operators, bad shapes, pointers to nowhere. */
function exprProblems(e: unknown, at: string, ops: string[], schema: Json, out: RuleProblem[]): void {
  if (!isObj(e)) {
    out.push(`${at}: expected an expression object`);
    return;
  }
  const forms = ['item', 'value', 'today', 'op'].filter((k) => k in e);
  if (forms.length !== 1) {
    out.push(`${at}: an expression has exactly one of item, value, today or op (has ${Object.keys(e).join(', ') || 'none'})`);
    return;
  }
  const form = forms[0];
  const allowed = form === 'op' ? ['op', 'args'] : [form];
  for (const k of Object.keys(e)) if (!allowed.includes(k)) out.push(`${at}: unknown key "${k}"`);
  if (form === 'item') {
    if (typeof e.item !== 'string') out.push(`${at}: item must be a JSON Pointer text`);
    else {
      try {
        if (!pointerExists(schema, parsePointer(e.item))) out.push(`${at}: ${e.item} is not an item of schema.json`);
      } catch (err) {
        out.push(`${at}: ${(err as Error).message}`);
      }
    }
    return;
  }
  if (form === 'value') {
    const v = e.value;
    if (!(typeof v === 'string' || typeof v === 'boolean' || (typeof v === 'number' && Number.isFinite(v)))) out.push(`${at}: value must be a text, number or true/false`);
    return;
  }
  if (form === 'today') {
    if (e.today !== true) out.push(`${at}: write the current date as { "today": true }`);
    return;
  }
  if (typeof e.op !== 'string' || !ops.includes(e.op)) {
    out.push(`${at}: op ${JSON.stringify(e.op)} is not one of the operators in forms/README.md (${ops.join(' ')})`);
  }
  if (!Array.isArray(e.args)) {
    out.push(`${at}: "${String(e.op)}" needs an args array`);
    return;
  }
  e.args.forEach((a, i) => {
    // The second argument of `in` is a list of constants, not an expression.
    if (e.op === 'in' && i === 1) {
      if (!Array.isArray(a) || a.length === 0) out.push(`${at}.args[1]: "in" needs a non-empty list of constants`);
      return;
    }
    exprProblems(a, `${at}.args[${i}]`, ops, schema, out);
  });
  if (e.op === 'present' && !(isObj(e.args[0]) && 'item' in e.args[0])) out.push(`${at}: "present" tests an item`);
  comparisonProblems(e, at, schema, out);
}

/** Lists every object schema that does not close its properties with additionalProperties: false. */
function openObjects(schema: unknown, at: string, out: string[]): void {
  if (Array.isArray(schema)) {
    schema.forEach((s, i) => openObjects(s, `${at}/${i}`, out));
    return;
  }
  if (!isObj(schema)) return;
  if ((schema.type === 'object' || 'properties' in schema) && schema.additionalProperties !== false) out.push(at || '/');
  for (const [k, v] of Object.entries(schema)) if (k !== 'const' && k !== 'enum' && k !== 'examples') openObjects(v, `${at}/${k}`, out);
}

/** Lists oneOf branches that carry a code without a title (the code list needs a decode for every code). */
function untitledCodes(schema: unknown, at: string, out: string[]): void {
  if (Array.isArray(schema)) {
    schema.forEach((s, i) => untitledCodes(s, `${at}/${i}`, out));
    return;
  }
  if (!isObj(schema)) return;
  if (Array.isArray(schema.oneOf)) {
    schema.oneOf.forEach((b, i) => {
      if (isObj(b) && 'const' in b && (typeof b.title !== 'string' || b.title === '')) out.push(`${at}/oneOf/${i}`);
    });
  }
  for (const [k, v] of Object.entries(schema)) if (k !== 'const' && k !== 'enum') untitledCodes(v, `${at}/${k}`, out);
}

/** Collects every x-units value and every x-derived item (with its pointer) of a schema. */
function keywordsOf(schema: unknown, at: string, units: string[], derived: { at: string; node: Json }[]): void {
  if (Array.isArray(schema)) {
    schema.forEach((s, i) => keywordsOf(s, `${at}/${i}`, units, derived));
    return;
  }
  if (!isObj(schema)) return;
  if ('x-units' in schema) units.push(String(schema['x-units']));
  if (schema['x-derived'] === true) derived.push({ at, node: schema });
  for (const [k, v] of Object.entries(schema)) keywordsOf(v, `${at}/${k}`, units, derived);
}

/** Checks a uiSchema level against its schema level: known properties, a complete ui:order, known widgets. */
function uiProblems(ui: unknown, schema: Json, at: string, out: string[]): void {
  if (!isObj(ui)) return;
  const widget = ui['ui:widget'];
  if (widget !== undefined && !isKnownWidget(widget)) out.push(`${at}: unknown widget ${JSON.stringify(widget)}`);
  if (schema.type === 'array') {
    const items = schema.items;
    const uiItems = ui.items;
    if (Array.isArray(items) && Array.isArray(uiItems)) {
      if (uiItems.length !== items.length) out.push(`${at}/items: ${uiItems.length} entries for ${items.length} tuple items`);
      uiItems.forEach((u, i) => isObj(items[i]) && uiProblems(u, items[i] as Json, `${at}/items/${i}`, out));
    } else if (isObj(items) && uiItems !== undefined) {
      uiProblems(uiItems, items, `${at}/items`, out);
    }
    return;
  }
  const props = isObj(schema.properties) ? schema.properties : {};
  for (const [k, v] of Object.entries(ui)) {
    if (k.startsWith('ui:')) continue;
    if (!(k in props)) out.push(`${at}/${k}: not an item of schema.json`);
    else uiProblems(v, props[k] as Json, `${at}/${k}`, out);
  }
  const order = ui['ui:order'];
  if (order !== undefined) {
    if (!Array.isArray(order)) out.push(`${at}: ui:order must be a list`);
    else {
      const names = Object.keys(props);
      for (const n of order) if (n !== '*' && !names.includes(String(n))) out.push(`${at}: ui:order names ${String(n)}, which is not an item`);
      if (!order.includes('*')) for (const n of names) if (!order.includes(n)) out.push(`${at}: ui:order leaves out ${n}`);
      if (new Set(order).size !== order.length) out.push(`${at}: ui:order names an item twice`);
    }
  }
}

type Example = { file: string; body: Json };
type Loaded = { schema: Json; ui: Json; rulesDoc: Json; rules: unknown[]; ruleIds: unknown[]; valid: Example[]; invalid: Example[] };

/** Reads one form folder: the three files and the examples. */
function loadForm(dir: string, where: string): Loaded {
  const schema = readJson(path.join(dir, 'schema.json'));
  const ui = readJson(path.join(dir, 'ui.json'));
  const rulesDoc = readJson(path.join(dir, 'rules.json'));
  const rules = Array.isArray(rulesDoc.rules) ? (rulesDoc.rules as unknown[]) : [];
  const exampleDir = path.join(dir, 'examples');
  const files = existsSync(exampleDir) ? readdirSync(exampleDir).filter((f) => f.endsWith('.json')).sort() : [];
  const read = (f: string): Example => ({ file: `${where}/examples/${f}`, body: readJson(path.join(exampleDir, f)) });
  return {
    schema,
    ui,
    rulesDoc,
    rules,
    ruleIds: rules.map((r) => (isObj(r) ? r.id : undefined)),
    valid: files.filter((f) => f.startsWith('valid-')).map(read),
    invalid: files.filter((f) => f.startsWith('invalid-')).map(read),
  };
}

const folders = readdirSync(FORMS_DIR)
  .filter((e) => statSync(path.join(FORMS_DIR, e)).isDirectory())
  .sort();

const OPS = readmeOps();

describe('forms/ folder', () => {
  it('holds form folders, one per key', () => {
    expect(folders.length).toBeGreaterThan(0);
  });

  it('README.md lists the operators of the check language', () => {
    expect(OPS).toEqual(['eq', 'ne', 'lt', 'lte', 'gt', 'gte', 'and', 'or', 'not', 'present', 'between', 'implies', 'add', 'sub', 'in']);
  });

  it('uses each x-form-key once', () => {
    const keys = folders.map((f) => readJson(path.join(FORMS_DIR, f, 'schema.json'))['x-form-key']);
    expect(new Set(keys).size).toBe(keys.length);
  });
});

for (const key of folders) {
  const dir = path.join(FORMS_DIR, key);
  const where = `forms/${key}`;

  describe(where, () => {
    // Files are read inside the tests, so a missing or broken file fails this form's tests with its name.
    let cache: Loaded | undefined;
    const load = (): Loaded => (cache ??= loadForm(dir, where));
    let compiled: ValidateFunction | undefined;
    const validator = (): ValidateFunction => (compiled ??= compileOrExplain(createAjv(), load().schema, `${where}/schema.json`));

    it('has schema.json, ui.json and rules.json that parse', () => {
      expect(() => load()).not.toThrow();
    });

    it('names itself after its folder, with a version, a title and an access class', () => {
      const { schema } = load();
      expect(schema['x-form-key'], `${where}/schema.json x-form-key`).toBe(key);
      const version = schema['x-form-version'];
      expect(Number.isInteger(version) && (version as number) >= 1, `${where}/schema.json x-form-version must be an integer ≥ 1`).toBe(true);
      expect(typeof schema.title === 'string' && schema.title.trim().length > 0, `${where}/schema.json needs a title`).toBe(true);
      expect(ACCESS, `${where}/schema.json x-access`).toContain(schema['x-access'] ?? 'all');
      expect(schema.type).toBe('object');
    });

    it('compiles in strict mode', () => {
      expect(() => validator()).not.toThrow();
    });

    it('closes every object with additionalProperties: false', () => {
      const { schema } = load();
      const open: string[] = [];
      openObjects(schema, '', open);
      expect(open, `${where}/schema.json objects without additionalProperties: false`).toEqual([]);
    });

    it('gives every code a title and uses only the listed units', () => {
      const { schema } = load();
      const untitled: string[] = [];
      untitledCodes(schema, '', untitled);
      expect(untitled, `${where}/schema.json codes without a title`).toEqual([]);
      const units: string[] = [];
      keywordsOf(schema, '', units, []);
      for (const u of units) expect(UNITS, `${where}/schema.json x-units`).toContain(u);
    });

    it('declares derived items read-only and never required', () => {
      const { schema } = load();
      const derived: { at: string; node: Json }[] = [];
      keywordsOf(schema, '', [], derived);
      for (const d of derived) expect(d.node.readOnly, `${where}/schema.json${d.at} is x-derived but not readOnly`).toBe(true);
      const required = Array.isArray(schema.required) ? schema.required : [];
      const props = isObj(schema.properties) ? schema.properties : {};
      for (const [name, p] of Object.entries(props)) {
        if (isObj(p) && p['x-derived'] === true) expect(required, `${where}/schema.json: ${name} is derived and cannot be required`).not.toContain(name);
      }
    });

    it('has a ui.json that matches the items', () => {
      const { schema, ui } = load();
      const problems: string[] = [];
      uiProblems(ui, schema, `${where}/ui.json`, problems);
      expect(problems).toEqual([]);
    });

    it('has at least one valid and three invalid examples', () => {
      const { valid, invalid } = load();
      expect(valid.length, `${where}/examples valid-*.json`).toBeGreaterThanOrEqual(1);
      expect(invalid.length, `${where}/examples invalid-*.json`).toBeGreaterThanOrEqual(3);
    });

    it('accepts every valid example', () => {
      const { valid } = load();
      const v = validator();
      for (const ex of valid) {
        const ok = v(ex.body);
        expect(ok ? {} : itemErrors(v.errors), `${ex.file} should validate`).toEqual({});
      }
    });

    it('describes every invalid example with why, expect and doc', () => {
      const { invalid } = load();
      for (const ex of invalid) {
        expect(Object.keys(ex.body).sort(), ex.file).toEqual(['doc', 'expect', 'why']);
        expect(typeof ex.body.why === 'string' && ex.body.why.length > 0, `${ex.file} why`).toBe(true);
        expect(String(ex.body.expect), `${ex.file} expect`).toMatch(/^(schema|rule:.+)$/);
        expect(isObj(ex.body.doc), `${ex.file} doc`).toBe(true);
      }
    });

    it('refuses every "schema" example for exactly one item', () => {
      const { invalid } = load();
      const v = validator();
      for (const ex of invalid.filter((e) => e.body.expect === 'schema')) {
        expect(v(ex.body.doc), `${ex.file} should fail schema validation`).toBe(false);
        // One broken thing: the errors all sit on one item (a oneOf reports each branch there).
        expect(Object.keys(itemErrors(v.errors)).length, `${ex.file} breaks more than one item: ${JSON.stringify(itemErrors(v.errors))}`).toBe(1);
      }
    });

    it('leaves every "rule:" example to an existing rule (the schema accepts it)', () => {
      const { ruleIds, invalid } = load();
      const v = validator();
      for (const ex of invalid.filter((e) => String(e.body.expect).startsWith('rule:'))) {
        const id = String(ex.body.expect).slice('rule:'.length);
        expect(ruleIds, `${ex.file} names rule ${id}`).toContain(id);
        const ok = v(ex.body.doc);
        expect(ok ? {} : itemErrors(v.errors), `${ex.file} must pass schema validation so only the rule can catch it`).toEqual({});
      }
    });

    it('has rules with id, level, message and assert, unique ids, README operators and existing items', () => {
      const { schema, rulesDoc, rules, ruleIds } = load();
      expect(Object.keys(rulesDoc), `${where}/rules.json top level`).toEqual(['rules']);
      expect(Array.isArray(rulesDoc.rules), `${where}/rules.json rules must be a list`).toBe(true);
      expect(new Set(ruleIds).size, `${where}/rules.json rule ids must be unique`).toBe(ruleIds.length);
      const problems: string[] = [];
      rules.forEach((r, i) => {
        const name = isObj(r) && typeof r.id === 'string' ? r.id : `#${i + 1}`;
        if (!isObj(r)) {
          problems.push(`rule ${name}: not an object`);
          return;
        }
        if (Object.keys(r).sort().join() !== 'assert,id,level,message') problems.push(`rule ${name}: keys must be id, level, message, assert`);
        if (typeof r.id !== 'string' || !/^[A-Za-z0-9][A-Za-z0-9._-]*$/.test(r.id)) problems.push(`rule ${name}: id`);
        if (r.level !== 'hard' && r.level !== 'soft') problems.push(`rule ${name}: level must be hard or soft`);
        if (typeof r.message !== 'string' || r.message.trim() === '') problems.push(`rule ${name}: message`);
        exprProblems(r.assert, `rule ${name} assert`, OPS, schema, problems);
        if (isObj(r.assert) && !('op' in r.assert)) problems.push(`rule ${name}: assert must be a condition (an op)`);
      });
      expect(problems, `${where}/rules.json`).toEqual([]);
    });
  });
}

describe('rule pointer check', () => {
  const schema: Json = {
    type: 'object',
    properties: {
      a: { type: 'string' },
      code: { type: 'string', oneOf: [{ const: 'Y', title: 'Yes' }, { const: 'N', title: 'No' }] },
      when: { type: 'string', format: 'date-time' },
      list: { type: 'array', maxItems: 2, items: { type: 'object', properties: { x: { type: 'number' } } } },
      tuple: { type: 'array', items: [{ type: 'integer' }, { type: 'integer' }], minItems: 2, additionalItems: false },
    },
  };

  it('finds items, wildcard array items, indices and tuple positions', () => {
    expect(pointerExists(schema, parsePointer('/a'))).toBe(true);
    expect(pointerExists(schema, parsePointer('/list/*/x'))).toBe(true);
    expect(pointerExists(schema, parsePointer('/list/1/x'))).toBe(true);
    expect(pointerExists(schema, parsePointer('/tuple/1'))).toBe(true);
    expect(pointerExists(schema, parsePointer('/tuple/*'))).toBe(true);
  });

  it('rejects names and indices the schema does not have', () => {
    expect(pointerExists(schema, parsePointer('/b'))).toBe(false);
    expect(pointerExists(schema, parsePointer('/list/*/y'))).toBe(false);
    expect(pointerExists(schema, parsePointer('/list/2/x'))).toBe(false);
    expect(pointerExists(schema, parsePointer('/tuple/2'))).toBe(false);
    expect(pointerExists(schema, parsePointer('/a/b'))).toBe(false);
  });

  it('reports an unknown operator and a pointer to nowhere', () => {
    const problems: string[] = [];
    exprProblems({ op: 'matches', args: [{ item: '/nope' }, { value: 1 }] }, 'assert', OPS, schema, problems);
    expect(problems).toEqual([
      'assert: op "matches" is not one of the operators in forms/README.md (eq ne lt lte gt gte and or not present between implies add sub in)',
      'assert.args[0]: /nope is not an item of schema.json',
    ]);
  });

  it('reports a constant that is not a code of the item, and an order on a date-time', () => {
    const problems: string[] = [];
    exprProblems({ op: 'in', args: [{ item: '/code' }, ['Y', 'yes']] }, 'a', OPS, schema, problems);
    exprProblems({ op: 'eq', args: [{ value: 'N' }, { item: '/code' }] }, 'b', OPS, schema, problems);
    exprProblems({ op: 'lte', args: [{ item: '/when' }, { today: true }] }, 'c', OPS, schema, problems);
    exprProblems({ op: 'lt', args: [{ item: '/list/*/x' }, { today: true }] }, 'd', OPS, schema, problems);
    expect(problems).toEqual([
      'a: "yes" is not a code of /code (codes: "Y", "N")',
      'c: "lte" orders numbers or dates, but /when is neither',
      "d: /list/*/x is compared with today's date but is not a date",
    ]);
  });
});
