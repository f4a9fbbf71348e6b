import { describe, it, expect } from 'vitest';
import { InvalidInputError, expandWildcards, formatPointer, getAt, parsePointer } from '@/lib/crf/pointer';

// The document and the expected results of the first table are the examples of RFC 6901
// (Bryan, Zyp & Nottingham 2013, "JavaScript Object Notation (JSON) Pointer"), section 5 (from memory).
const rfcDoc: Record<string, unknown> = {
  foo: ['bar', 'baz'],
  '': 0,
  'a/b': 1,
  'c%d': 2,
  'e^f': 3,
  'g|h': 4,
  'i\\j': 5,
  'k"l': 6,
  ' ': 7,
  'm~n': 8,
};

function expectInvalid(run: () => unknown, message: RegExp): void {
  let caught: unknown;
  try {
    run();
  } catch (e) {
    caught = e;
  }
  expect(caught).toBeInstanceOf(InvalidInputError);
  expect((caught as InvalidInputError).code).toBe('invalid_input');
  expect((caught as Error).message).toMatch(message);
}

describe('getAt: RFC 6901 section 5 examples (from memory)', () => {
  const cases: [string, unknown][] = [
    ['', rfcDoc],
    ['/foo', ['bar', 'baz']],
    ['/foo/0', 'bar'],
    ['/', 0],
    ['/a~1b', 1],
    ['/c%d', 2],
    ['/e^f', 3],
    ['/g|h', 4],
    ['/i\\j', 5],
    ['/k"l', 6],
    ['/ ', 7],
    ['/m~0n', 8],
  ];
  it.each(cases)('%j resolves per RFC 6901 section 5', (pointer, expected) => {
    expect(getAt(rfcDoc, pointer)).toEqual(expected);
  });
});

describe('getAt: absent places give undefined', () => {
  const doc = { rows: [{ a: 1 }, { a: null }], o: { k: 'v' }, n: 5 };
  const cases: [string, string, unknown][] = [
    ['missing key', '/nope', undefined],
    ['past the end of an array', '/rows/2', undefined],
    ['"-" (one past the end) names no element', '/rows/-', undefined],
    ['an index with a leading zero is not an index', '/rows/01', undefined],
    ['a non-number token on an array', '/rows/a', undefined],
    ['through a leaf', '/n/x', undefined],
    ['a prototype member is not an item', '/o/constructor', undefined],
    ['"__proto__" is not an item', '/o/__proto__', undefined],
    ['null is a value, not absence', '/rows/1/a', null],
    ['a nested value', '/rows/0/a', 1],
  ];
  it.each(cases)('%s', (_name, pointer, expected) => {
    expect(getAt(doc, pointer)).toBe(expected);
  });
});

describe('parsePointer / formatPointer', () => {
  const cases: [string, string[]][] = [
    ['', []],
    ['/', ['']],
    ['/a/b', ['a', 'b']],
    ['/a~1b/c~0d', ['a/b', 'c~d']],
    // '~01' is '~' followed by '1', not '/': ~1 is unescaped before ~0 (RFC 6901 section 4, from memory).
    ['/~01', ['~1']],
    ['/zeigefinger/über~1unter', ['zeigefinger', 'über/unter']],
    ['//x', ['', 'x']],
  ];
  it.each(cases)('%j round-trips', (pointer, tokens) => {
    expect(parsePointer(pointer)).toEqual(tokens);
    expect(formatPointer(tokens)).toBe(pointer);
  });

  it('formats array indices as numbers', () => {
    expect(formatPointer(['goniometry', 2, 'pip_flexion'])).toBe('/goniometry/2/pip_flexion');
  });

  it('refuses a pointer that does not start with "/"', () => {
    expectInvalid(() => parsePointer('VISDAT'), /"VISDAT" must be empty or start with "\/"/);
  });

  it('refuses a "~" not followed by 0 or 1', () => {
    expectInvalid(() => parsePointer('/a~2b'), /"\/a~2b" has a "~" that is not followed by 0 or 1/);
    expectInvalid(() => parsePointer('/a~'), /"\/a~"/);
  });

  it('refuses a negative or fractional index', () => {
    expectInvalid(() => formatPointer(['rows', -1]), /whole number of zero or more \(got -1\)/);
    expectInvalid(() => formatPointer(['rows', 1.5]), /got 1\.5/);
  });
});

describe('expandWildcards', () => {
  const doc = {
    goniometry: [
      { finger: 'index', sessions: [{ v: 1 }, { v: 2 }] },
      { finger: 'middle', sessions: [] },
      { finger: 'ring', sessions: [{ v: 3 }] },
    ],
    notArray: { '0': 'x' },
  };
  const cases: [string, string, { pointer: string; bindings: number[] }[]][] = [
    ['no wildcard gives the pattern itself, even when absent', '/absent/x', [{ pointer: '/absent/x', bindings: [] }]],
    [
      'one wildcard ranges over the indices, item present or not',
      '/goniometry/*/pip_flexion',
      [
        { pointer: '/goniometry/0/pip_flexion', bindings: [0] },
        { pointer: '/goniometry/1/pip_flexion', bindings: [1] },
        { pointer: '/goniometry/2/pip_flexion', bindings: [2] },
      ],
    ],
    [
      'nested wildcards give the existing combinations, outer index first',
      '/goniometry/*/sessions/*/v',
      [
        { pointer: '/goniometry/0/sessions/0/v', bindings: [0, 0] },
        { pointer: '/goniometry/0/sessions/1/v', bindings: [0, 1] },
        { pointer: '/goniometry/2/sessions/0/v', bindings: [2, 0] },
      ],
    ],
    ['a wildcard on an object yields nothing', '/notArray/*', []],
    ['a wildcard below an absent item yields nothing', '/absent/*/x', []],
    ['a wildcard on an empty array yields nothing', '/goniometry/1/sessions/*', []],
  ];
  it.each(cases)('%s', (_name, pattern, expected) => {
    expect(expandWildcards(doc, pattern)).toEqual(expected);
  });

  it('escapes keys of the expanded pointers', () => {
    expect(expandWildcards({ 'a/b': [1, 2] }, '/a~1b/*')).toEqual([
      { pointer: '/a~1b/0', bindings: [0] },
      { pointer: '/a~1b/1', bindings: [1] },
    ]);
  });
});
