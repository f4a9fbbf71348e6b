// Pure helpers shared by the snapshot writer and the exports: the items of a CRF schema (data dictionary),
// the columns of a form's table, a record flattened to those columns, and the de-identification of values.
// Item keys are dotted paths: `VISDAT`, `goniometry.*.hand` (a repeating row), `quickdash.3` (a fixed position,
// counted from 1). Column keys replace each `*` with the row number: `goniometry.2.hand`.

type Node = Record<string, unknown>;

/** One item of a form version, as the data dictionary lists it. */
export type ItemDef = {
  key: string;
  label: string;
  type: string;
  format: string | null;
  units: string | null;
  codes: { value: string | number | boolean; label: string }[] | null;
  minimum: number | null;
  maximum: number | null;
  derived: boolean;
  /** A string without a code list or format: free text, left out of de-identified exports. */
  freeText: boolean;
};

/** A column of a form table. */
export type Column = { key: string; label: string; item: string };

const baseType = (t: unknown): string => {
  if (Array.isArray(t)) return String(t.find((x) => x !== 'null') ?? 'string');
  return typeof t === 'string' ? t : 'string';
};

function codesOf(n: Node): ItemDef['codes'] {
  if (Array.isArray(n.oneOf)) {
    const c = (n.oneOf as Node[]).filter((o) => 'const' in o && o.const !== null).map((o) => ({ value: o.const as string | number, label: String(o.title ?? o.const) }));
    return c.length ? c : null;
  }
  if (Array.isArray(n.enum)) {
    const c = (n.enum as unknown[]).filter((v) => v !== null).map((v) => ({ value: v as string | number, label: String(v) }));
    return c.length ? c : null;
  }
  return null;
}

function isObjectNode(n: Node) {
  return baseType(n.type) === 'object' && typeof n.properties === 'object' && n.properties !== null;
}

/** Every leaf item of a schema, in schema order. */
export function schemaItems(schema: Node): ItemDef[] {
  const out: ItemDef[] = [];
  const walk = (n: Node, parts: string[], labels: string[], derived: boolean) => {
    const isDerived = derived || n['x-derived'] === true;
    const type = baseType(n.type);
    if (isObjectNode(n)) {
      for (const [k, child] of Object.entries(n.properties as Record<string, Node>)) walk(child, [...parts, k], [...labels, String(child.title ?? k)], isDerived);
      return;
    }
    if (type === 'array' && Array.isArray(n.items)) {
      (n.items as Node[]).forEach((child, i) => walk(child, [...parts, String(i + 1)], [...labels.slice(0, -1), String(child.title ?? `${labels.at(-1) ?? ''} ${i + 1}`)], isDerived));
      return;
    }
    if (type === 'array' && n.items && typeof n.items === 'object') {
      const child = n.items as Node;
      const childLabels = isObjectNode(child) ? labels : [...labels.slice(0, -1), `${labels.at(-1) ?? ''}: ${String(child.title ?? 'value')}`];
      walk(child, [...parts, '*'], childLabels, isDerived);
      return;
    }
    const codes = codesOf(n);
    const format = typeof n.format === 'string' ? n.format : null;
    out.push({
      key: parts.join('.'),
      label: labels.join(' › '),
      type,
      format,
      units: typeof n['x-units'] === 'string' ? (n['x-units'] as string) : null,
      codes,
      minimum: typeof n.minimum === 'number' ? n.minimum : null,
      maximum: typeof n.maximum === 'number' ? n.maximum : null,
      derived: isDerived,
      freeText: type === 'string' && !codes && !format,
    });
  };
  walk(schema, [], [], false);
  return out;
}

/** One value of a record at its column. */
export type FlatValue = { item: string; column: string; value: unknown };

/** A record's entered and derived items flattened along the schema (values the schema does not declare are kept as JSON under their own path). */
export function flattenRecord(schema: Node, doc: Record<string, unknown>): FlatValue[] {
  const out: FlatValue[] = [];
  const walk = (n: Node | undefined, v: unknown, item: string[], col: string[]) => {
    if (v === undefined) return;
    const type = n ? baseType(n.type) : 'unknown';
    if (n && isObjectNode(n) && v !== null && typeof v === 'object' && !Array.isArray(v)) {
      const props = n.properties as Record<string, Node>;
      for (const k of Object.keys(props)) walk(props[k], (v as Node)[k], [...item, k], [...col, k]);
      for (const k of Object.keys(v as Node)) if (!(k in props)) out.push({ item: [...item, k].join('.'), column: [...col, k].join('.'), value: (v as Node)[k] });
      return;
    }
    if (n && type === 'array' && Array.isArray(v)) {
      if (Array.isArray(n.items)) {
        v.forEach((x, i) => walk((n.items as Node[])[i], x, [...item, String(i + 1)], [...col, String(i + 1)]));
        return;
      }
      if (n.items && typeof n.items === 'object') {
        v.forEach((x, i) => walk(n.items as Node, x, [...item, '*'], [...col, String(i + 1)]));
        return;
      }
    }
    out.push({ item: item.join('.'), column: col.join('.'), value: v });
  };
  walk(schema, doc, [], []);
  return out;
}

/** Repeating-row counts seen in a record: pattern (item key up to a `*`) → highest row number. */
export function repeatCounts(values: FlatValue[], into: Record<string, number> = {}): Record<string, number> {
  for (const v of values) {
    const ip = v.item.split('.');
    const cp = v.column.split('.');
    for (let i = 0; i < ip.length; i++) {
      if (ip[i] !== '*') continue;
      const pattern = ip.slice(0, i + 1).join('.');
      into[pattern] = Math.max(into[pattern] ?? 0, Number(cp[i]));
    }
  }
  return into;
}

/** The columns of one form version: repeating rows expanded up to the counts seen in the snapshot (at least one), row by row. */
export function schemaColumns(schema: Node, repeats: Record<string, number>): Column[] {
  const byKey = new Map(schemaItems(schema).map((i) => [i.key, i]));
  const out: Column[] = [];
  const walk = (n: Node, item: string[], col: string[], suffix: string) => {
    const type = baseType(n.type);
    if (isObjectNode(n)) {
      for (const [k, child] of Object.entries(n.properties as Record<string, Node>)) walk(child, [...item, k], [...col, k], suffix);
      return;
    }
    if (type === 'array' && Array.isArray(n.items)) {
      (n.items as Node[]).forEach((child, i) => walk(child, [...item, String(i + 1)], [...col, String(i + 1)], suffix));
      return;
    }
    if (type === 'array' && n.items && typeof n.items === 'object') {
      const pattern = [...item, '*'].join('.');
      const rows = Math.max(1, repeats[pattern] ?? 0);
      for (let r = 1; r <= rows; r++) walk(n.items as Node, [...item, '*'], [...col, String(r)], `${suffix} #${r}`);
      return;
    }
    const key = item.join('.');
    out.push({ key: col.join('.'), label: (byKey.get(key)?.label ?? key) + suffix, item: key });
  };
  walk(schema, [], [], '');
  return out;
}

/** Whole days from `ref` to `date` (both YYYY-MM-DD…); the reference date itself is day 0. */
export function studyDay(date: string, ref: string): number | null {
  const d = Date.parse(`${date.slice(0, 10)}T00:00:00Z`);
  const r = Date.parse(`${ref.slice(0, 10)}T00:00:00Z`);
  if (!Number.isFinite(d) || !Number.isFinite(r)) return null;
  return Math.round((d - r) / 86_400_000);
}

export const isDateFormat = (f: string | null) => f === 'date' || f === 'date-time';

/**
 * The de-identified form of one value: free text is dropped (undefined), dates become study days relative to the
 * participant's reference date (null when there is none), everything else is kept.
 */
export function deidentifyValue(item: ItemDef | undefined, value: unknown, refDate: string | null): unknown {
  if (!item) return typeof value === 'string' ? undefined : value;
  if (item.freeText) return undefined;
  if (isDateFormat(item.format)) {
    if (typeof value !== 'string') return value === null ? null : undefined;
    return refDate ? studyDay(value, refDate) : null;
  }
  return value;
}
