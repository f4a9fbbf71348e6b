import { describe, it, expect } from 'vitest';
import { RulesFileError, evaluateRules, validateRules, type Rule, type Violation } from '@/lib/crf/rules';
import { InvalidInputError } from '@/lib/crf/pointer';

const TODAY = '2025-06-01';

/** One rule around an assert, loaded through validateRules as a form's rules.json would be. */
function load(assert: unknown, id = 'r', level = 'hard'): Rule[] {
  return validateRules({ rules: [{ id, level, message: `Rule ${id} failed.`, assert }] }, 'forms/test/rules.json');
}

function check(assert: unknown, doc: unknown, today = TODAY): Violation[] {
  return evaluateRules(load(assert), doc, { today });
}

const holds = (assert: unknown, doc: unknown, today = TODAY): boolean => check(assert, doc, today).length === 0;

/** The three-valued outcome of a condition: n/a and true both hold, but only true turns into false under not. */
function outcome(cond: unknown, doc: unknown = {}): 'true' | 'false' | 'n/a' {
  const plain = holds(cond, doc);
  const negated = holds({ op: 'not', args: [cond] }, doc);
  if (plain && !negated) return 'true';
  if (!plain && negated) return 'false';
  if (plain && negated) return 'n/a';
  throw new Error('a condition and its negation both failed');
}

const item = (p: string) => ({ item: p });
const val = (v: unknown) => ({ value: v });
const op = (name: string, ...args: unknown[]) => ({ op: name, args });
const T = op('eq', val(1), val(1));
const F = op('eq', val(1), val(2));
const N = op('eq', item('/missing'), val(1));

describe('comparisons: eq ne lt lte gt gte', () => {
  const doc = { a: 3, b: 5, d1: '2025-01-31', d2: '2025-02-01', s: 'Y', yes: true, dt: '2025-01-31T10:00:00Z', nul: null };
  const cases: [string, unknown, 'true' | 'false' | 'n/a'][] = [
    ['eq numbers equal', op('eq', item('/a'), val(3)), 'true'],
    ['eq numbers differ', op('eq', item('/a'), item('/b')), 'false'],
    ['ne numbers', op('ne', item('/a'), item('/b')), 'true'],
    ['ne equal numbers', op('ne', item('/a'), val(3)), 'false'],
    ['lt 3 < 5', op('lt', item('/a'), item('/b')), 'true'],
    ['lt 5 < 3', op('lt', item('/b'), item('/a')), 'false'],
    ['lt 3 < 3', op('lt', item('/a'), val(3)), 'false'],
    ['lte 3 ≤ 3', op('lte', item('/a'), val(3)), 'true'],
    ['lte 5 ≤ 3', op('lte', item('/b'), val(3)), 'false'],
    ['gt 5 > 3', op('gt', item('/b'), item('/a')), 'true'],
    ['gt 3 > 3', op('gt', item('/a'), val(3)), 'false'],
    ['gte 3 ≥ 3', op('gte', item('/a'), val(3)), 'true'],
    ['gte 3 ≥ 5', op('gte', item('/a'), item('/b')), 'false'],
    ['numbers compare numerically, not as text (10 > 9)', op('gt', val(10), val(9)), 'true'],
    ['dates: 2025-01-31 < 2025-02-01', op('lt', item('/d1'), item('/d2')), 'true'],
    ['dates: 2025-02-01 ≥ 2025-01-31', op('gte', item('/d2'), item('/d1')), 'true'],
    ['dates: gte fails the other way', op('gte', item('/d1'), item('/d2')), 'false'],
    ['dates equal with eq', op('eq', item('/d1'), val('2025-01-31')), 'true'],
    ['texts with eq', op('eq', item('/s'), val('Y')), 'true'],
    ['texts with ne', op('ne', item('/s'), val('N')), 'true'],
    ['true/false with eq', op('eq', item('/yes'), val(true)), 'true'],
    ['true/false with ne', op('ne', item('/yes'), val(true)), 'false'],
    ['number vs text is n/a', op('eq', item('/a'), val('3')), 'n/a'],
    ['number vs date is n/a', op('lt', item('/a'), item('/d1')), 'n/a'],
    ['date vs date-time is n/a', op('lt', item('/d1'), item('/dt')), 'n/a'],
    ['texts that are not dates have no order: n/a', op('lt', item('/s'), val('Z')), 'n/a'],
    ['true/false have no order: n/a', op('lt', item('/yes'), val(false)), 'n/a'],
    ['an impossible date (2025-02-30) has no order: n/a', op('lt', val('2025-02-30'), item('/d2')), 'n/a'],
    ['a missing item is n/a', op('eq', item('/missing'), val(3)), 'n/a'],
    ['a null item counts as missing: n/a', op('lt', item('/nul'), val(3)), 'n/a'],
    ['an object item has no comparison: n/a', op('eq', item('/obj'), val(1)), 'n/a'],
  ];
  it.each(cases)('%s', (_name, cond, expected) => {
    expect(outcome(cond, { ...doc, obj: { x: 1 } })).toBe(expected);
  });
});

describe('add, sub', () => {
  const doc = { pip: 80, dip: 40, mcp: 85, def: 20, txt: '5' };
  const cases: [string, unknown, 'true' | 'false' | 'n/a'][] = [
    ['add of two', op('eq', op('add', item('/pip'), item('/dip')), val(120)), 'true'],
    ['add of three', op('eq', op('add', item('/mcp'), item('/pip'), item('/dip')), val(205)), 'true'],
    ['sub', op('eq', op('sub', item('/pip'), item('/def')), val(60)), 'true'],
    ['sub order matters', op('eq', op('sub', item('/def'), item('/pip')), val(-60)), 'true'],
    ['nested arithmetic', op('lte', op('sub', op('add', item('/pip'), item('/dip')), item('/def')), val(100)), 'true'],
    ['nested arithmetic fails', op('gt', op('sub', op('add', item('/pip'), item('/dip')), item('/def')), val(100)), 'false'],
    ['add with a missing item is n/a', op('eq', op('add', item('/pip'), item('/missing')), val(80)), 'n/a'],
    ['sub with a text is n/a', op('eq', op('sub', item('/pip'), item('/txt')), val(75)), 'n/a'],
    ['add of dates is n/a', op('eq', op('add', val('2025-01-01'), val(1)), val('2025-01-02')), 'n/a'],
  ];
  it.each(cases)('%s', (_name, cond, expected) => {
    expect(outcome(cond, doc)).toBe(expected);
  });
});

describe('between, in, present', () => {
  const doc = { x: 5, d: '2025-03-10', sex: 'F', grade: 2, flag: true, empty: '', nul: null, rows: [] };
  const cases: [string, unknown, 'true' | 'false' | 'n/a'][] = [
    ['between inside', op('between', item('/x'), val(0), val(10)), 'true'],
    ['between is inclusive at the low end', op('between', item('/x'), val(5), val(10)), 'true'],
    ['between is inclusive at the high end', op('between', item('/x'), val(0), val(5)), 'true'],
    ['between below', op('between', item('/x'), val(6), val(10)), 'false'],
    ['between above', op('between', item('/x'), val(0), val(4)), 'false'],
    ['between dates', op('between', item('/d'), val('2025-03-01'), val('2025-03-31')), 'true'],
    ['between dates outside', op('between', item('/d'), val('2025-04-01'), val('2025-04-30')), 'false'],
    ['between a missing bound is n/a', op('between', item('/x'), item('/missing'), val(10)), 'n/a'],
    ['between a missing item is n/a', op('between', item('/missing'), val(0), val(10)), 'n/a'],
    ['between mixed kinds is n/a', op('between', item('/x'), val('2025-01-01'), val(10)), 'n/a'],
    ['in: member', op('in', item('/sex'), ['M', 'F']), 'true'],
    ['in: not a member', op('in', item('/sex'), ['M', 'U']), 'false'],
    ['in: integer codes', op('in', item('/grade'), [1, 2, 3]), 'true'],
    ['in: integer codes, not a member', op('in', item('/grade'), [3, 4]), 'false'],
    ['in: true/false', op('in', item('/flag'), [true]), 'true'],
    ['in: a missing item is n/a', op('in', item('/missing'), ['M', 'F']), 'n/a'],
    ['in: a number against a list of texts is n/a', op('in', item('/grade'), ['2']), 'n/a'],
    ['in: only same-type entries count', op('in', item('/grade'), ['2', 3]), 'false'],
    ['present: a value', op('present', item('/x')), 'true'],
    ['present: an empty text is a value', op('present', item('/empty')), 'true'],
    ['present: an empty array is a value', op('present', item('/rows')), 'true'],
    ['present: absent', op('present', item('/missing')), 'false'],
    ['present: null is missing', op('present', item('/nul')), 'false'],
  ];
  it.each(cases)('%s', (_name, cond, expected) => {
    expect(outcome(cond, doc)).toBe(expected);
  });
});

describe('and, or, not, implies: three-valued, n/a holds', () => {
  const names = { T, F, N } as const;
  const not: [keyof typeof names, 'true' | 'false' | 'n/a'][] = [
    ['T', 'false'],
    ['F', 'true'],
    // not(n/a) = n/a, which holds: negating a check on a missing item never creates a violation.
    ['N', 'n/a'],
  ];
  it.each(not)('not(%s) = %s', (a, expected) => {
    expect(outcome(op('not', names[a]))).toBe(expected);
  });

  const binary: [keyof typeof names, keyof typeof names, string, string, string][] = [
    // a, b, and(a,b), or(a,b), implies(a,b)
    ['T', 'T', 'true', 'true', 'true'],
    ['T', 'F', 'false', 'true', 'false'],
    ['T', 'N', 'n/a', 'true', 'n/a'],
    ['F', 'T', 'false', 'true', 'true'],
    ['F', 'F', 'false', 'false', 'true'],
    ['F', 'N', 'false', 'n/a', 'true'],
    ['N', 'T', 'n/a', 'true', 'true'],
    ['N', 'F', 'false', 'n/a', 'n/a'],
    ['N', 'N', 'n/a', 'n/a', 'n/a'],
  ];
  it.each(binary)('%s, %s: and = %s, or = %s, implies = %s', (a, b, and, or, implies) => {
    expect(outcome(op('and', names[a], names[b]))).toBe(and);
    expect(outcome(op('or', names[a], names[b]))).toBe(or);
    expect(outcome(op('implies', names[a], names[b]))).toBe(implies);
  });

  it('and/or take more than two arguments', () => {
    expect(outcome(op('and', T, T, F))).toBe('false');
    expect(outcome(op('and', T, T, T))).toBe('true');
    expect(outcome(op('or', F, F, T))).toBe('true');
    expect(outcome(op('or', F, F, F))).toBe('false');
  });

  it('implies: a serious event needs an outcome; n/a when seriousness is not entered', () => {
    const rule = op('implies', op('eq', item('/AESER'), val('Y')), op('present', item('/AEOUT')));
    expect(holds(rule, { AESER: 'Y', AEOUT: 'RECOVERED' })).toBe(true);
    expect(holds(rule, { AESER: 'Y' })).toBe(false);
    expect(holds(rule, { AESER: 'N' })).toBe(true);
    expect(holds(rule, {})).toBe(true);
  });
});

describe('today and dates', () => {
  const notInFuture = op('lte', item('/VISDAT'), { today: true });
  const cases: [string, unknown, string, boolean][] = [
    ['a visit today holds', { VISDAT: '2025-06-01' }, '2025-06-01', true],
    ['a visit yesterday holds', { VISDAT: '2025-05-31' }, '2025-06-01', true],
    ['a visit tomorrow fails', { VISDAT: '2025-06-02' }, '2025-06-01', false],
    ['the same visit holds once the site date has moved on', { VISDAT: '2025-06-02' }, '2025-06-02', true],
    ['across a year end', { VISDAT: '2025-01-01' }, '2024-12-31', false],
    ['a missing visit date is n/a', {}, '2025-06-01', true],
  ];
  it.each(cases)('%s', (_name, doc, today, expected) => {
    expect(holds(notInFuture, doc, today)).toBe(expected);
  });

  it('refuses a context date that is not YYYY-MM-DD', () => {
    const rules = load(notInFuture);
    for (const today of ['01.06.2025', '2025-6-1', '2025-02-29', '', '2025-06-01T00:00:00Z']) {
      let caught: unknown;
      try {
        evaluateRules(rules, {}, { today });
      } catch (e) {
        caught = e;
      }
      expect(caught).toBeInstanceOf(InvalidInputError);
      expect((caught as InvalidInputError).code).toBe('invalid_input');
      expect((caught as Error).message).toMatch(/site's current date must be a date written YYYY-MM-DD/);
    }
  });

  it('accepts 29 February in a leap year', () => {
    expect(holds(notInFuture, { VISDAT: '2024-02-29' }, '2024-02-29')).toBe(true);
  });
});

describe('the example rules of forms/README.md', () => {
  const repair = {
    rules: [
      {
        id: 'repair-not-before-injury',
        level: 'hard',
        message: 'The date of repair cannot be before the date of injury.',
        assert: { op: 'gte', args: [{ item: '/REPDAT' }, { item: '/INJDAT' }] },
      },
    ],
  };

  it('repair-not-before-injury: refuses a repair before the injury and reports both items', () => {
    const rules = validateRules(repair, 'forms/injury/rules.json');
    expect(evaluateRules(rules, { INJDAT: '2025-03-02', REPDAT: '2025-03-01' }, { today: TODAY })).toEqual([
      {
        ruleId: 'repair-not-before-injury',
        level: 'hard',
        message: 'The date of repair cannot be before the date of injury.',
        items: ['/REPDAT', '/INJDAT'],
      },
    ]);
    expect(evaluateRules(rules, { INJDAT: '2025-03-02', REPDAT: '2025-03-02' }, { today: TODAY })).toEqual([]);
    expect(evaluateRules(rules, { INJDAT: '2025-03-02' }, { today: TODAY })).toEqual([]);
  });

  const deficitRule = {
    id: 'pip-deficit-within-flexion',
    level: 'soft',
    message: 'The PIP extension deficit cannot exceed the PIP flexion.',
    assert: { op: 'lte', args: [{ item: '/goniometry/*/pip_ext_deficit' }, { item: '/goniometry/*/pip_flexion' }] },
  };
  const deficit = validateRules({ rules: [deficitRule] }, 'forms/goniometry/rules.json');

  it('extension deficit ≤ flexion is checked once per goniometry row, each row against itself', () => {
    const doc = {
      goniometry: [
        { finger: 'index', pip_flexion: 95, pip_ext_deficit: 5 }, // holds
        { finger: 'middle', pip_flexion: 30, pip_ext_deficit: 40 }, // fails
        { finger: 'ring', pip_ext_deficit: 50 }, // flexion missing: n/a
        { finger: 'little', pip_flexion: 20 }, // deficit missing: n/a
        { finger: 'thumb' }, // both missing: n/a
        { finger: 'index', pip_flexion: 10, pip_ext_deficit: 10 }, // equal: holds
        { finger: 'middle', pip_flexion: 60, pip_ext_deficit: 61 }, // fails
      ],
    };
    expect(evaluateRules(deficit, doc, { today: TODAY })).toEqual([
      {
        ruleId: 'pip-deficit-within-flexion',
        level: 'soft',
        message: 'The PIP extension deficit cannot exceed the PIP flexion.',
        items: ['/goniometry/1/pip_ext_deficit', '/goniometry/1/pip_flexion'],
      },
      {
        ruleId: 'pip-deficit-within-flexion',
        level: 'soft',
        message: 'The PIP extension deficit cannot exceed the PIP flexion.',
        items: ['/goniometry/6/pip_ext_deficit', '/goniometry/6/pip_flexion'],
      },
    ]);
  });

  it('extension deficit ≤ flexion: no rows or no array means nothing to check', () => {
    expect(evaluateRules(deficit, { goniometry: [] }, { today: TODAY })).toEqual([]);
    expect(evaluateRules(deficit, {}, { today: TODAY })).toEqual([]);
    expect(evaluateRules(deficit, { goniometry: { '0': { pip_flexion: 1, pip_ext_deficit: 2 } } }, { today: TODAY })).toEqual([]);
  });
});

describe('wildcard binding', () => {
  it('two arrays share the index: row i of one is checked against row i of the other', () => {
    const rule = op('lte', item('/affected/*/tam'), item('/contralateral/*/tam'));
    const doc = { affected: [{ tam: 200 }, { tam: 260 }, { tam: 100 }], contralateral: [{ tam: 250 }, { tam: 250 }] };
    // Row 1 fails (260 > 250); row 2 has no contralateral value, so it is n/a. Pairing across indices
    // (affected/2 = 100 with contralateral/0 = 250, or affected/1 with /0) would give other results.
    expect(check(rule, doc).map((v) => v.items)).toEqual([['/affected/1/tam', '/contralateral/1/tam']]);
  });

  it('the binding comes from every pattern with the most wildcards, so the shorter array does not hide rows', () => {
    const rule = op('implies', op('present', item('/affected/*/tam')), op('present', item('/contralateral/*/tam')));
    const doc = { affected: [{ tam: 1 }, { tam: 2 }, { tam: 3 }], contralateral: [{ tam: 1 }] };
    expect(check(rule, doc).map((v) => v.items)).toEqual([
      ['/affected/1/tam', '/contralateral/1/tam'],
      ['/affected/2/tam', '/contralateral/2/tam'],
    ]);
    const reversed = op('implies', op('present', item('/contralateral/*/tam')), op('present', item('/affected/*/tam')));
    expect(check(reversed, doc)).toEqual([]);
  });

  it('nested wildcards bind position by position: the first * to the row, the second to the trial', () => {
    // Every grip trial must be at most the row's maximum, and the row's maximum is read with one *.
    const rule = op('lte', item('/grip/*/trials/*/kg'), item('/grip/*/max_kg'));
    const doc = {
      grip: [
        { max_kg: 30, trials: [{ kg: 28 }, { kg: 31 }, { kg: 30 }] },
        { max_kg: 40, trials: [] },
        { max_kg: 20, trials: [{ kg: 25 }] },
      ],
    };
    expect(check(rule, doc).map((v) => v.items)).toEqual([
      ['/grip/0/trials/1/kg', '/grip/0/max_kg'],
      ['/grip/2/trials/0/kg', '/grip/2/max_kg'],
    ]);
  });

  it('nested wildcards run over the cartesian product in order', () => {
    const rule = op('present', item('/v/*/s/*/x'));
    const doc = { v: [{ s: [{}, {}] }, { s: [{}] }, { s: [{ x: 1 }, {}] }] };
    expect(check(rule, doc).map((v) => v.items[0])).toEqual(['/v/0/s/0/x', '/v/0/s/1/x', '/v/1/s/0/x', '/v/2/s/1/x']);
  });

  it('a rule without wildcards is checked once, also combined with constants only', () => {
    expect(check(op('lte', val('2025-01-01'), { today: true }), {})).toEqual([]);
    expect(check(op('gt', val('2025-01-01'), { today: true }), {})).toEqual([
      { ruleId: 'r', level: 'hard', message: 'Rule r failed.', items: [] },
    ]);
  });

  it('a violation lists every pointer the check read, once each, in order of first reading', () => {
    const rule = op(
      'and',
      op('present', item('/rows/*/a')),
      op('gte', item('/rows/*/a'), item('/base')),
      op('lte', item('/rows/*/b'), op('add', item('/base'), val(10))),
    );
    const doc = { base: 5, rows: [{ a: 6, b: 30 }] };
    expect(check(rule, doc)).toEqual([
      { ruleId: 'r', level: 'hard', message: 'Rule r failed.', items: ['/rows/0/a', '/base', '/rows/0/b'] },
    ]);
  });

  it('keys with "/" and "~" are reported escaped', () => {
    const rule = op('present', item('/a~1b/*/m~0n'));
    expect(check(rule, { 'a/b': [{}] }).map((v) => v.items)).toEqual([['/a~1b/0/m~0n']]);
  });
});

describe('evaluateRules over several rules', () => {
  it('reports rules in file order, each with its level', () => {
    const rules = validateRules(
      {
        rules: [
          { id: 'first', level: 'soft', message: 'First.', assert: op('present', item('/a')) },
          { id: 'second', level: 'hard', message: 'Second.', assert: op('present', item('/b')) },
          { id: 'third', level: 'hard', message: 'Third.', assert: op('present', item('/c')) },
        ],
      },
      'forms/x/rules.json',
    );
    expect(evaluateRules(rules, { b: 1 }, { today: TODAY })).toEqual([
      { ruleId: 'first', level: 'soft', message: 'First.', items: ['/a'] },
      { ruleId: 'third', level: 'hard', message: 'Third.', items: ['/c'] },
    ]);
  });

  it('does not change the document or the rules', () => {
    const rules = load(op('lte', item('/g/*/d'), item('/g/*/f')));
    const doc = { g: [{ d: 5, f: 1 }] };
    const before = JSON.stringify([rules, doc]);
    evaluateRules(rules, doc, { today: TODAY });
    expect(JSON.stringify([rules, doc])).toBe(before);
  });
});

describe('validateRules refuses a broken rules.json', () => {
  const FILE = 'forms/goniometry/rules.json';
  const refuse = (doc: unknown, message: RegExp) => {
    let caught: unknown;
    try {
      validateRules(doc, FILE);
    } catch (e) {
      caught = e;
    }
    expect(caught).toBeInstanceOf(RulesFileError);
    expect((caught as Error).message.startsWith(`${FILE}: `)).toBe(true);
    expect((caught as Error).message).toMatch(message);
  };
  const rule = (assert: unknown, extra: Record<string, unknown> = {}) => ({
    rules: [{ id: 'my-rule', level: 'hard', message: 'M.', assert, ...extra }],
  });

  const arity: [string, unknown[], RegExp][] = [
    ['eq', [val(1)], /"eq" takes exactly 2 arguments \(got 1\)/],
    ['ne', [val(1), val(2), val(3)], /"ne" takes exactly 2 arguments \(got 3\)/],
    ['lt', [], /"lt" takes exactly 2 arguments \(got 0\)/],
    ['lte', [val(1)], /"lte" takes exactly 2 arguments/],
    ['gt', [val(1)], /"gt" takes exactly 2 arguments/],
    ['gte', [val(1), val(2), val(3)], /"gte" takes exactly 2 arguments/],
    ['and', [T], /"and" takes at least 2 arguments \(got 1\)/],
    ['or', [], /"or" takes at least 2 arguments \(got 0\)/],
    ['not', [T, F], /"not" takes exactly 1 argument \(got 2\)/],
    ['implies', [T], /"implies" takes exactly 2 arguments \(got 1\)/],
    ['present', [item('/a'), item('/b')], /"present" takes exactly 1 argument \(got 2\)/],
    ['between', [val(1), val(2)], /"between" takes exactly 3 arguments \(got 2\)/],
    ['in', [val(1)], /"in" takes exactly 2 arguments \(got 1\)/],
  ];
  it.each(arity)('arity of %s', (name, args, message) => {
    refuse(rule(op(name, ...args)), new RegExp(`rule "my-rule", assert: ${message.source}`));
  });

  it.each([
    ['add', [val(1)], /"add" takes at least 2 arguments \(got 1\)/],
    ['sub', [val(1), val(2), val(3)], /"sub" takes exactly 2 arguments \(got 3\)/],
  ] as [string, unknown[], RegExp][])('arity of %s', (name, args, message) => {
    refuse(rule(op('eq', op(name, ...args), val(1))), new RegExp(`assert\\.args\\[0\\]: ${message.source}`));
  });

  const broken: [string, unknown, RegExp][] = [
    ['not an object', [], /the document: must be an object of the form \{ "rules": \[ \.\.\. \] \}/],
    ['no rules array', { rules: {} }, /"rules" must be an array/],
    ['an unknown top-level key', { rules: [], extra: 1 }, /unknown key "extra"; only "rules" is allowed/],
    ['a rule that is not an object', { rules: [42] }, /rule #1: must be an object/],
    ['a missing id', { rules: [{ level: 'hard', message: 'M.', assert: T }] }, /rule #1: "id" must be a name/],
    ['an id with spaces', { rules: [{ id: 'my rule', level: 'hard', message: 'M.', assert: T }] }, /rule #1: "id" must be a name .*got "my rule"/],
    [
      'a duplicate id',
      { rules: [{ id: 'dup', level: 'hard', message: 'M.', assert: T }, { id: 'dup', level: 'soft', message: 'N.', assert: T }] },
      /rule "dup": the id is used by more than one rule/,
    ],
    ['a bad level', rule(T, { level: 'warning' }), /rule "my-rule": "level" must be "hard" or "soft" \(got "warning"\)/],
    ['a missing message', { rules: [{ id: 'my-rule', level: 'hard', assert: T }] }, /rule "my-rule": "message" must be a non-empty text/],
    ['a blank message', rule(T, { message: '  ' }), /rule "my-rule": "message" must be a non-empty text/],
    ['a missing assert', { rules: [{ id: 'my-rule', level: 'hard', message: 'M.' }] }, /rule "my-rule": "assert" is missing/],
    ['a misspelt key', rule(T, { mesage: 'x' }), /rule "my-rule": unknown key "mesage"/],
    ['an unknown op', rule(op('equals', val(1), val(1))), /rule "my-rule", assert: unknown op "equals" \(known: eq, ne/],
    ['an unknown nested op', rule(op('and', T, op('xor', T, F))), /rule "my-rule", assert\.args\[1\]: unknown op "xor"/],
    ['a value where a condition is needed', rule(item('/AESER')), /assert: a "item" expression is a value, but a condition is needed/],
    ['arithmetic where a condition is needed', rule(op('add', val(1), val(2))), /assert: "add" yields a number, but a condition is needed/],
    ['a condition where a value is needed', rule(op('eq', T, val(true))), /assert\.args\[0\]: "eq" is a condition, but a value is needed/],
    ['a condition inside and that is a value', rule(op('and', T, val(true))), /assert\.args\[1\]: a "value" expression is a value/],
    ['two forms in one expression', rule(op('eq', { item: '/a', value: 1 }, val(1))), /exactly one of "item", "value", "today" or "op"/],
    ['no form at all', rule(op('eq', {}, val(1))), /exactly one of "item", "value", "today" or "op" \(got \[\]\)/],
    ['an extra key in an op', rule({ op: 'eq', args: [val(1), val(1)], note: 'x' }), /unknown key "note" in a "op" expression/],
    ['args not an array', rule({ op: 'not', args: T }), /"not" needs an "args" array/],
    ['present of a non-item', rule(op('present', val(1))), /"present" tests an item/],
    ['in with a list expression', rule(op('in', item('/SEX'), val(['M', 'F']))), /"in" needs a non-empty list of constants/],
    ['in with an empty list', rule(op('in', item('/SEX'), [])), /"in" needs a non-empty list of constants/],
    ['in with an object in the list', rule(op('in', item('/SEX'), ['M', { x: 1 }])), /assert\.args\[1\]\[1\]: the list of "in" may hold only/],
    ['a pointer without "/"', rule(op('present', item('AESER'))), /"AESER" must be empty or start with "\/"/],
    ['a pointer with a bad escape', rule(op('present', item('/a~2'))), /has a "~" that is not followed by 0 or 1/],
    ['the root as an item', rule(op('present', item(''))), /"item" must be a JSON Pointer such as "\/VISDAT" \(got ""\)/],
    ['a null constant', rule(op('eq', item('/a'), val(null))), /"value" must be a text, a finite number or true\/false \(got null\)/],
    ['today not true', rule(op('lte', item('/a'), { today: 'yes' })), /"today" must be written \{ "today": true \}/],
  ];
  it.each(broken)('%s', (_name, doc, message) => refuse(doc, message));

  it('names the offending rule, not an earlier good one', () => {
    refuse(
      { rules: [{ id: 'good', level: 'hard', message: 'M.', assert: T }, { id: 'bad', level: 'soft', message: 'M.', assert: op('lt', val(1)) }] },
      /^forms\/goniometry\/rules\.json: rule "bad", assert: "lt" takes exactly 2 arguments \(got 1\)\.$/,
    );
  });

  it('accepts an empty rule list and every op in one file', () => {
    expect(validateRules({ rules: [] }, FILE)).toEqual([]);
    const every = op(
      'and',
      op('eq', item('/a'), val(1)),
      op('ne', item('/a'), val('x')),
      op('lt', op('add', item('/a'), val(1)), val(3)),
      op('lte', op('sub', item('/a'), val(1)), val(3)),
      op('gt', { today: true }, val('2000-01-01')),
      op('gte', item('/d'), val('2000-01-01')),
      op('or', op('not', op('present', item('/b'))), op('between', item('/b'), val(0), val(9))),
      op('implies', op('in', item('/s'), ['Y']), op('present', item('/rows/*/x'))),
    );
    const [loaded] = validateRules(rule(every), FILE);
    expect(loaded).toEqual({ id: 'my-rule', level: 'hard', message: 'M.', assert: every });
    expect(evaluateRules([loaded], { a: 1, d: '2020-02-02', s: 'Y', rows: [{ x: 1 }] }, { today: TODAY })).toEqual([]);
  });
});
