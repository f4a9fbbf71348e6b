import { describe, it, expect } from 'vitest';
import { canonicalEqual, diffItems, type ItemChange } from '@/lib/crf/diff';

const visit = {
  VISDAT: '2025-03-14',
  goniometry: [
    { finger: 'index', pip_flexion: 95, pip_ext_deficit: 5 },
    { finger: 'middle', pip_flexion: 90, pip_ext_deficit: 10 },
    { finger: 'ring', pip_flexion: 80, pip_ext_deficit: 15 },
  ],
  grip: { affected_kg: 21.5, unaffected_kg: 38 },
};

const clone = <T>(v: T): T => structuredClone(v);

describe('diffItems', () => {
  const cases: [string, unknown, unknown, ItemChange[]][] = [
    ['unchanged documents give no entries', visit, clone(visit), []],
    ['key order does not matter', { a: 1, b: 2 }, { b: 2, a: 1 }, []],
    [
      "a finger's joint changed inside an array gives exactly that item",
      visit,
      (() => {
        const v = clone(visit);
        v.goniometry[2].pip_flexion = 85;
        return v;
      })(),
      [{ path: '/goniometry/2/pip_flexion', old: 80, new: 85 }],
    ],
    [
      'an appended element gives one entry per leaf inside it',
      { rows: [{ a: 1 }] },
      { rows: [{ a: 1 }, { a: 2, b: 'x' }] },
      [
        { path: '/rows/1/a', old: undefined, new: 2 },
        { path: '/rows/1/b', old: undefined, new: 'x' },
      ],
    ],
    [
      'a removed last element gives one entry per leaf inside it',
      { rows: [{ a: 1 }, { a: 2 }] },
      { rows: [{ a: 1 }] },
      [{ path: '/rows/1/a', old: 2, new: undefined }],
    ],
    [
      'removing a middle element compares by index (later elements shift)',
      { rows: [10, 20, 30] },
      { rows: [10, 30] },
      [
        { path: '/rows/1', old: 20, new: 30 },
        { path: '/rows/2', old: 30, new: undefined },
      ],
    ],
    ['a key added', { a: 1 }, { a: 1, b: 2 }, [{ path: '/b', old: undefined, new: 2 }]],
    ['a key removed', { a: 1, b: 2 }, { a: 1 }, [{ path: '/b', old: 2, new: undefined }]],
    ['absent → null is a change', {}, { AESER: null }, [{ path: '/AESER', old: undefined, new: null }]],
    ['null → absent is a change', { AESER: null }, {}, [{ path: '/AESER', old: null, new: undefined }]],
    ['null → value is a change', { AESER: null }, { AESER: 'Y' }, [{ path: '/AESER', old: null, new: 'Y' }]],
    ['null unchanged is no change', { AESER: null }, { AESER: null }, []],
    ['a member set to undefined counts as absent', { a: 1, b: undefined }, { a: 1 }, []],
    [
      'a nested subtree added gives its leaves in sorted order',
      { a: 1 },
      { a: 1, grip: { z: 3, trials: [30, 31], a: { deep: true } } },
      [
        { path: '/grip/a/deep', old: undefined, new: true },
        { path: '/grip/trials/0', old: undefined, new: 30 },
        { path: '/grip/trials/1', old: undefined, new: 31 },
        { path: '/grip/z', old: undefined, new: 3 },
      ],
    ],
    [
      'a nested subtree removed gives its leaves',
      { grip: { l: 1, r: 2 } },
      {},
      [
        { path: '/grip/l', old: 1, new: undefined },
        { path: '/grip/r', old: 2, new: undefined },
      ],
    ],
    ['an empty object added is one entry for itself', {}, { notes: {} }, [{ path: '/notes', old: undefined, new: {} }]],
    ['an empty array removed is one entry for itself', { rows: [] }, {}, [{ path: '/rows', old: [], new: undefined }]],
    [
      'leaf → object: the leaf is removed, the new leaves added',
      { grip: 30 },
      { grip: { l: 30, r: 40 } },
      [
        { path: '/grip', old: 30, new: undefined },
        { path: '/grip/l', old: undefined, new: 30 },
        { path: '/grip/r', old: undefined, new: 40 },
      ],
    ],
    [
      'object → leaf: the old leaves removed, the leaf added',
      { grip: { l: 30 } },
      { grip: 'n/a' },
      [
        { path: '/grip/l', old: 30, new: undefined },
        { path: '/grip', old: undefined, new: 'n/a' },
      ],
    ],
    [
      'array → object at one place',
      { x: [1] },
      { x: { '0': 1 } },
      [
        { path: '/x/0', old: 1, new: undefined },
        { path: '/x/0', old: undefined, new: 1 },
      ],
    ],
    ['leaf → empty object is one entry', { x: 5 }, { x: {} }, [{ path: '/x', old: 5, new: {} }]],
    ['empty object → empty array is one entry', { x: {} }, { x: [] }, [{ path: '/x', old: {}, new: [] }]],
    ['number → text is a leaf change', { x: 1 }, { x: '1' }, [{ path: '/x', old: 1, new: '1' }]],
    [
      'unicode keys, "/" and "~" are escaped in the paths',
      { 'Daumen/Zeigefinger': 1, 'a~b': 2, 'Ringfinger ü': 3 },
      { 'Daumen/Zeigefinger': 9, 'a~b': 8, 'Ringfinger ü': 7 },
      [
        { path: '/Daumen~1Zeigefinger', old: 1, new: 9 },
        { path: '/Ringfinger ü', old: 3, new: 7 },
        { path: '/a~0b', old: 2, new: 8 },
      ],
    ],
    ['whole-document leaves use the root pointer', 1, 2, [{ path: '', old: 1, new: 2 }]],
    [
      'indices ascend numerically, not as text',
      { r: Array.from({ length: 11 }, () => 0) },
      { r: Array.from({ length: 11 }, (_, i) => (i === 2 || i === 10 ? 1 : 0)) },
      [
        { path: '/r/2', old: 0, new: 1 },
        { path: '/r/10', old: 0, new: 1 },
      ],
    ],
  ];
  it.each(cases)('%s', (_name, before, after, expected) => {
    expect(diffItems(before, after)).toEqual(expected);
  });

  it('is deterministic whatever the key insertion order', () => {
    const a = diffItems({ b: 1, a: 1, c: { y: 1, x: 1 } }, { c: { x: 2, y: 2 }, a: 2, b: 2 });
    expect(a.map((c) => c.path)).toEqual(['/a', '/b', '/c/x', '/c/y']);
  });

  it('keeps old and new distinct when an entry is removal (new undefined) or addition (old undefined)', () => {
    const [removed] = diffItems({ a: 1 }, {});
    expect('new' in removed && removed.new === undefined).toBe(true);
    expect(removed.old).toBe(1);
  });
});

describe('canonicalEqual', () => {
  const cases: [string, unknown, unknown, boolean][] = [
    ['same document', visit, clone(visit), true],
    ['key order ignored', { a: 1, b: [1, { c: 2, d: 3 }] }, { b: [1, { d: 3, c: 2 }], a: 1 }, true],
    ['array order matters', [1, 2], [2, 1], false],
    ['null differs from absent', { a: null }, {}, false],
    ['undefined member equals absent', { a: undefined }, {}, true],
    ['{} differs from []', {}, [], false],
    ['1 differs from "1"', 1, '1', false],
    ['nested change', { g: [{ p: 80 }] }, { g: [{ p: 85 }] }, false],
    ['an extra key', { a: 1 }, { a: 1, b: 2 }, false],
  ];
  it.each(cases)('%s', (_name, a, b, expected) => {
    expect(canonicalEqual(a, b)).toBe(expected);
    expect(canonicalEqual(b, a)).toBe(expected);
  });
});
