/**
 * Item-level differences between two versions of a case report form document, for the audit trail and
 * for "what changed" views.
 *
 * A leaf is any value that is not a plain object or an array (numbers, text, booleans, null, …). Paths are
 * JSON Pointers (RFC 6901): array elements by index, object members by key. A member whose value is
 * undefined counts as absent, as it would after a JSON round trip; null is a value, so `null` and "absent"
 * differ.
 *
 * The list is deterministic: object keys in ascending code-unit order, array indices ascending, and at a
 * place whose shape changed, the removed leaves before the added ones.
 */

import { formatPointer, isPlainObject } from './pointer';

/** One changed leaf: `old` is undefined for an addition, `new` for a removal. */
export type ItemChange = { path: string; old: unknown; new: unknown };

type Shape = 'absent' | 'object' | 'array' | 'leaf';

function shapeOf(v: unknown): Shape {
  if (v === undefined) return 'absent';
  if (Array.isArray(v)) return 'array';
  if (isPlainObject(v)) return 'object';
  return 'leaf';
}

function presentKeys(o: Record<string, unknown>): string[] {
  return Object.keys(o).filter((k) => o[k] !== undefined);
}

function leafEqual(a: unknown, b: unknown): boolean {
  if (a === b) return true;
  // NaN is not a JSON value, but an unchanged NaN must not show up as a change.
  if (typeof a === 'number' && typeof b === 'number') return Number.isNaN(a) && Number.isNaN(b);
  if (a instanceof Date && b instanceof Date) return a.getTime() === b.getTime();
  return false;
}

/** Every leaf of a subtree with its path; an empty object or array stands for itself. */
function leavesOf(v: unknown, path: (string | number)[], out: { path: string; value: unknown }[]): void {
  const shape = shapeOf(v);
  if (shape === 'absent') return;
  if (shape === 'array') {
    const arr = v as unknown[];
    const present = arr.map((_, i) => i).filter((i) => arr[i] !== undefined);
    if (present.length === 0) out.push({ path: formatPointer(path), value: v });
    for (const i of present) leavesOf(arr[i], [...path, i], out);
    return;
  }
  if (shape === 'object') {
    const obj = v as Record<string, unknown>;
    const keys = presentKeys(obj).sort();
    if (keys.length === 0) out.push({ path: formatPointer(path), value: v });
    for (const k of keys) leavesOf(obj[k], [...path, k], out);
    return;
  }
  out.push({ path: formatPointer(path), value: v });
}

function walk(a: unknown, b: unknown, path: (string | number)[], out: ItemChange[]): void {
  const sa = shapeOf(a);
  const sb = shapeOf(b);
  if (sa === 'absent' && sb === 'absent') return;
  if (sa === 'object' && sb === 'object') {
    const oa = a as Record<string, unknown>;
    const ob = b as Record<string, unknown>;
    const keys = [...new Set([...presentKeys(oa), ...presentKeys(ob)])].sort();
    for (const k of keys) walk(oa[k], ob[k], [...path, k], out);
    return;
  }
  if (sa === 'array' && sb === 'array') {
    const aa = a as unknown[];
    const ab = b as unknown[];
    const n = Math.max(aa.length, ab.length);
    for (let i = 0; i < n; i++) walk(aa[i], ab[i], [...path, i], out);
    return;
  }
  if (sa === 'leaf' && sb === 'leaf') {
    if (!leafEqual(a, b)) out.push({ path: formatPointer(path), old: a, new: b });
    return;
  }
  // The shape changed (or one side is absent): the old leaves go, the new leaves come.
  const removed: { path: string; value: unknown }[] = [];
  const added: { path: string; value: unknown }[] = [];
  leavesOf(a, path, removed);
  leavesOf(b, path, added);
  const here = formatPointer(path);
  if (removed.length === 1 && added.length === 1 && removed[0].path === here && added[0].path === here) {
    // A leaf replaced by an empty object/array (or {} by []): one entry, not a removal and an addition at one path.
    out.push({ path: here, old: removed[0].value, new: added[0].value });
    return;
  }
  for (const r of removed) out.push({ path: r.path, old: r.value, new: undefined });
  for (const x of added) out.push({ path: x.path, old: undefined, new: x.value });
}

/** Leaf-level differences between two documents as JSON Pointers, in a deterministic order. */
export function diffItems(before: unknown, after: unknown): ItemChange[] {
  const out: ItemChange[] = [];
  walk(before, after, [], out);
  return out;
}

/** Deep equality that ignores object key order and treats undefined members as absent. */
export function canonicalEqual(a: unknown, b: unknown): boolean {
  // Defined through the diff so that "equal" and "no differences" can never disagree.
  return diffItems(a, b).length === 0;
}
