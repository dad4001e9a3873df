// Bad-input properties of the relation allow-list, 10,000 cases each. fast-check draws a new
// seed every run and prints it with the shrunk counterexample on failure; pass that `seed` and
// `path` to fc.assert to replay it.
//
// "Never evaluated" is made observable with a sentinel on the global object: reading, calling
// or writing `globalThis.__fairsheetEscape` is recorded. The generated text names it in every
// way an expression language could reach it (a call, a property of globalThis, a string handed
// to evaluate/Function/eval, an import, a constructor chain); any escape from the allow-list to
// JavaScript or to a mathjs evaluator would touch it.
import fc from 'fast-check';
import { afterAll, afterEach, beforeAll, describe, expect, it } from 'vitest';
import {
  ExpressionError,
  bindRelation,
  parseExpression,
  parseRelation,
  type ExprNode,
  type SymbolQuantity,
} from '@shared/engine/expression';
import { DIMENSION_NAME } from '@shared/engine/model';

const runs = { numRuns: 10_000 };
const HALF_PAIR = /[\ud800-\udbff](?![\udc00-\udfff])|(?<![\ud800-\udbff])[\udc00-\udfff]/;
const timeout = 180_000;

const SENTINEL = '__fairsheetEscape';
const touches: string[] = [];

beforeAll(() => {
  Object.defineProperty(globalThis, SENTINEL, {
    configurable: true,
    get() {
      touches.push('read');
      return () => touches.push('called');
    },
    set() {
      touches.push('written');
    },
  });
});
afterAll(() => {
  delete (globalThis as Record<string, unknown>)[SENTINEL];
});
afterEach(() => {
  touches.length = 0;
});

const codes = ['syntax', 'forbidden', 'unknown-name', 'unit-mismatch', 'division-by-zero'];
const allowedFunctions: Record<string, [number, number]> = {
  sqrt: [1, 1],
  abs: [1, 1],
  min: [1, Infinity],
  max: [1, Infinity],
  hypot: [1, Infinity],
  sin: [1, 1],
  cos: [1, 1],
  tan: [1, 1],
  asin: [1, 1],
  acos: [1, 1],
  atan: [1, 1],
  atan2: [2, 2],
};
const unitSymbols = ['mm', 'cm', 'inch', 'thou', 'mil', 'ft', 'deg'];

/** An independent walk of the allow-list: only these nodes may come out of a parse. */
function expectAllowed(n: ExprNode, length: number): void {
  expect(Number.isInteger(n.at) && n.at >= 0 && n.at <= length).toBe(true);
  switch (n.t) {
    case 'num':
      expect(Number.isFinite(n.v)).toBe(true);
      return;
    case 'unit':
      expect(unitSymbols).toContain(n.unit);
      return;
    case 'sym':
      expect(n.name).toMatch(DIMENSION_NAME);
      return;
    case 'neg':
      expectAllowed(n.a, length);
      return;
    case 'bin':
      expect(['+', '-', '*', '/', '^']).toContain(n.op);
      expectAllowed(n.a, length);
      expectAllowed(n.b, length);
      return;
    case 'call': {
      expect(Object.hasOwn(allowedFunctions, n.fn)).toBe(true);
      const [min, max] = allowedFunctions[n.fn]!;
      expect(n.args.length >= min && n.args.length <= max).toBe(true);
      for (const a of n.args) expectAllowed(a, length);
      return;
    }
    default:
      throw new Error(`a node outside the allow-list: ${JSON.stringify(n)}`);
  }
}

function expectOwnError(e: unknown, text: string): asserts e is ExpressionError {
  if (!(e instanceof ExpressionError)) throw e;
  expect(codes).toContain(e.code);
  expect(typeof e.at).toBe('number');
  expect(e.at! >= 0 && e.at! <= text.length).toBe(true);
  expect(e.message.length).toBeGreaterThan(0);
  // Messages end up in stored results (jsonb), which refuse half a surrogate pair.
  expect(e.message).not.toMatch(HALF_PAIR);
}

/** Every name a relation may use stands for a dimension; a few are angles or counts. */
function quantityOf(name: string): SymbolQuantity {
  return name.startsWith('t') ? 'angle' : name.startsWith('n') ? 'count' : 'length';
}

/**
 * Parses, and if accepted binds and evaluates every compiled form at a point. Returns whether
 * the parse refused it. Throws (failing the property) on anything but the engine's own errors.
 */
function exercise(text: string, point: number[], asRelation = true): 'refused' | 'accepted' {
  let names: string[];
  try {
    if (asRelation) {
      const r = parseRelation(text);
      expectAllowed(r.lhs, text.length);
      expectAllowed(r.rhs, text.length);
      names = r.names;
    } else {
      expectAllowed(parseExpression(text), text.length);
      return 'accepted';
    }
  } catch (e) {
    expectOwnError(e, text);
    return 'refused';
  }
  for (const n of names) expect(n).toMatch(DIMENSION_NAME);
  try {
    const compiled = bindRelation(
      parseRelation(text),
      (n) =>
        DIMENSION_NAME.test(n) ? { index: names.indexOf(n), quantity: quantityOf(n) } : undefined,
      point[0]! > 0 ? 'in' : 'mm',
    );
    const x = Float64Array.from(names, (_, i) => point[i % point.length]!);
    const g = new Float64Array(compiled.vars.length);
    expect(typeof compiled.residual(x)).toBe('number');
    expect(typeof compiled.scale(x)).toBe('number');
    expect(typeof compiled.gradient(x, g)).toBe('number');
    expect([0, 1, 2]).toContain(compiled.degreeIn(() => true));
    const why = compiled.diagnose(x);
    if (why) expect(typeof why.message).toBe('string');
  } catch (e) {
    expectOwnError(e, text);
  }
  return 'accepted';
}

const point = fc.array(fc.double({ min: -1e3, max: 1e3, noNaN: true }), {
  minLength: 1,
  maxLength: 4,
});

/** A piece of generated text and whether it holds a construct the allow-list must refuse. */
interface Gen {
  s: string;
  bad: boolean;
}
const ok = (s: string): Gen => ({ s, bad: false });
const bad = (s: string): Gen => ({ s, bad: true });

const names = fc.constantFrom(
  'a',
  'b',
  'x',
  'overall',
  'frame.bolt_x',
  'theta',
  'n_holes',
  'e',
  'i',
  '_',
  SENTINEL,
  'globalThis',
  'process',
  'require',
  'this',
  'math',
  'end',
  'toString',
  'constructor',
  '__proto__',
  'valueOf',
  'hasOwnProperty',
  'prototype',
  'import_x',
);
const numbers = fc.oneof(
  fc.integer({ min: 0, max: 1_000_000 }).map(String),
  fc.double({ min: 0, max: 1e6, noNaN: true }).map(String),
  fc.constantFrom('.5', '1.', '1e3', '2.5E-3', '0', '007'),
);
const unitLiterals = fc.constantFrom(
  '1/8"',
  '30°',
  '2 mm',
  '3 in',
  '0.5 cm',
  '15 thou',
  '2 ft',
  '1 inch',
  '3 mil',
  '45 deg',
  '2"',
  'pi',
);
const forbiddenLeaves = fc.constantFrom(
  // strings, in either quote
  '"abc"',
  `"${SENTINEL}()"`,
  '"return globalThis.__fairsheetEscape()"',
  '"5 cm"',
  "'abc'",
  '`abc`',
  // numbers JavaScript or mathjs would read but a drawing never needs
  '0x1F',
  '0b101',
  '0o17',
  '1e400',
  // constants and matrices, objects, indexing, ranges
  'true',
  'false',
  'null',
  'undefined',
  'NaN',
  'Infinity',
  '[1, 2]',
  '[1; 2]',
  '[]',
  '{a: 1}',
  '{}',
  'a[1]',
  'a[1:2]',
  'a[end]',
  '1:3',
  // property access and the classic constructor chains
  'a.b.c',
  '(a).b',
  `(${SENTINEL}).call`,
  `globalThis.${SENTINEL}.x`,
  `a.constructor.constructor("return ${SENTINEL}()")()`,
  `cos.constructor("${SENTINEL}()")()`,
  `"".constructor.constructor("${SENTINEL}()")()`,
  // characters that are no part of the language
  '$a',
  '@a',
  '#a',
  '\\a',
  'a?b:1',
);
const allowedFunctionNames = fc.constantFrom(...Object.keys(allowedFunctions));
const forbiddenFunctionNames = fc.constantFrom(
  'evaluate',
  'import',
  'createUnit',
  'parse',
  'compile',
  'simplify',
  'derivative',
  'typed',
  'config',
  'help',
  'chain',
  'eval',
  'Function',
  'require',
  SENTINEL,
  'toString',
  'constructor',
  'valueOf',
  'hasOwnProperty',
  '__proto__',
  'unit',
  'string',
  'matrix',
  'bignumber',
  'fraction',
  'range',
  'map',
  'forEach',
  'apply',
  'log',
  'exp',
  'pow',
  'round',
  'f',
  'pi',
  'e',
  'mm',
  'in',
);
const forbiddenBinary = fc.constantFrom(
  '%',
  'mod',
  'to',
  'and',
  'or',
  'xor',
  '&',
  '|',
  '<<',
  '>>',
  '>>>',
  '==',
  '!=',
  '<',
  '>',
  '<=',
  '>=',
  '.*',
  './',
  '.^',
  '**',
  '//',
  ';',
  '=',
);

/**
 * mathjs-ish expressions, tracking which hold a forbidden construct. With `forbidden` off only
 * allowed constructs are drawn (so about half the cases get as far as being evaluated).
 */
function expressions(forbidden: boolean): fc.Arbitrary<Gen> {
  return fc.letrec<{ expr: Gen }>((tie) => {
    const allowed: fc.Arbitrary<Gen>[] = [
      names.map(ok),
      numbers.map(ok),
      unitLiterals.map(ok),
      fc
        .tuple(tie('expr'), fc.constantFrom('+', '-', '*', '/', '^', ''), tie('expr'))
        // An empty operator is implicit multiplication (`2 a`, `3 mm`).
        .map(([a, op, b]) => ({ s: `${a.s} ${op} ${b.s}`, bad: a.bad || b.bad })),
      fc
        .tuple(fc.constantFrom('-', '+'), tie('expr'))
        .map(([op, a]) => ({ s: op + a.s, bad: a.bad })),
      tie('expr').map((a) => ({ s: `(${a.s})`, bad: a.bad })),
      fc
        .tuple(allowedFunctionNames, fc.array(tie('expr'), { minLength: 1, maxLength: 3 }))
        .map(([f, args]) => ({
          s: `${f}(${args.map((a) => a.s).join(', ')})`,
          bad: args.some((a) => a.bad),
        })),
    ];
    const refused: fc.Arbitrary<Gen>[] = [
      forbiddenLeaves.map(bad),
      fc
        .tuple(tie('expr'), forbiddenBinary, tie('expr'))
        .map(([a, op, b]) => bad(`${a.s} ${op} ${b.s}`)),
      fc.tuple(fc.constantFrom('!', '~', 'not '), tie('expr')).map(([op, a]) => bad(op + a.s)),
      fc.tuple(tie('expr'), fc.constantFrom("'", '!')).map(([a, op]) => bad(`(${a.s})${op}`)),
      fc
        .tuple(forbiddenFunctionNames, fc.array(tie('expr'), { maxLength: 3 }))
        .map(([f, args]) => bad(`${f}(${args.map((a) => a.s).join(', ')})`)),
      // Forbidden wrappers around any expression.
      fc
        .tuple(
          fc.constantFrom(
            (s: string) => `[${s}]`,
            (s: string) => `{k: ${s}}`,
            (s: string) => `(${s})[1]`,
            (s: string) => `(${s}).constructor`,
            (s: string) => `f(x) = ${s}`,
            (s: string) => `(y = ${s})`,
            (s: string) => `${SENTINEL} = ${s}`,
            (s: string) => `\`\${${s}}\``,
            (s: string) => `${s}; ${s}`,
            (s: string) => `${s} ? ${s} : 0`,
            (s: string) => `evaluate("${s}")`,
            (s: string) => `import({f: ${s}}, {override: true})`,
            (s: string) => `createUnit("furlong", "${s}")`,
          ),
          tie('expr'),
        )
        .map(([wrap, a]) => bad(wrap(a.s))),
    ];
    return {
      expr: fc.oneof(
        { depthSize: 'small', maxDepth: 6 },
        ...allowed,
        ...(forbidden ? refused : []),
      ),
    };
  }).expr;
}

const expr = fc.oneof(expressions(false), expressions(true));
const relation = fc
  .oneof(
    fc.tuple(expressions(false), expressions(false)),
    fc.tuple(expressions(true), expressions(true)),
    fc.tuple(expressions(false), expressions(true)),
  )
  .map(([l, r]): Gen => ({ s: `${l.s} = ${r.s}`, bad: l.bad || r.bad }));

describe('the relation allow-list on bad input (property, 10,000 cases each)', () => {
  it('the sentinel notices code that reaches it (so its silence below means something)', () => {
    new Function(`return globalThis.${SENTINEL}()`)();
    expect(touches).toEqual(['read', 'called']);
  });

  it(
    'arbitrary strings: an allow-listed tree, or the engine’s own error with its position; nothing reaches the global object',
    () => {
      const alphabet = [
        ...'ab x=+-*/^()., 0123456789sinqrtmaxhypot[]{}\'";:?!<>&|%e°\n\t`$#@\\_',
        'in',
        'mm',
        'deg',
        SENTINEL,
        'constructor',
        'toString',
        'evaluate',
        'import',
        // An emoji, and each half of one alone.
        '😀',
        '\ud83d',
        '\ude00',
      ];
      fc.assert(
        fc.property(
          fc.oneof(
            fc.string({ unit: 'binary', maxLength: 40 }),
            fc.string({ unit: fc.constantFrom(...alphabet), maxLength: 30 }),
          ),
          point,
          (text, p) => {
            exercise(text, p);
            exercise(text, p, false);
            expect(touches).toEqual([]);
          },
        ),
        runs,
      );
    },
    timeout,
  );

  it(
    'mathjs-ish relations with forbidden constructs are refused when parsed, with the engine’s own error; the rest evaluate; nothing reaches the global object',
    () => {
      const seen = { bad: 0, accepted: 0 };
      fc.assert(
        fc.property(relation, point, (rel, p) => {
          const outcome = exercise(rel.s, p);
          if (rel.bad) {
            expect(outcome, rel.s).toBe('refused');
            seen.bad++;
          } else if (outcome === 'accepted') seen.accepted++;
          expect(touches).toEqual([]);
        }),
        runs,
      );
      // The grammar must really produce both: forbidden constructs, and relations that pass and
      // are evaluated.
      expect(seen.bad).toBeGreaterThan(runs.numRuns / 4);
      expect(seen.accepted).toBeGreaterThan(runs.numRuns / 10);
    },
    timeout,
  );

  it(
    'the same expressions without an = (a formula field): forbidden constructs refused, nothing reaches the global object',
    () => {
      fc.assert(
        fc.property(expr, point, (e, p) => {
          const outcome = exercise(e.s, p, false);
          if (e.bad) expect(outcome, e.s).toBe('refused');
          expect(touches).toEqual([]);
        }),
        runs,
      );
    },
    timeout,
  );
});
