import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import {
  ExpressionError,
  bindRelation,
  parseExpression,
  parseRelation,
  type CompiledRelation,
  type SymbolQuantity,
} from '@shared/engine/expression';
import { solveModel } from '@shared/engine/solve';

function refusal(text: string): { code: string; at: number | undefined } {
  try {
    parseRelation(text);
  } catch (e) {
    if (e instanceof ExpressionError) return { code: e.code, at: e.at };
    throw e;
  }
  throw new Error(`'${text}' was accepted`);
}

/** Binds a relation over named dimensions; x holds their values in the order given. */
function bind(
  text: string,
  dims: Record<string, SymbolQuantity>,
  unit: 'in' | 'mm' = 'in',
): CompiledRelation {
  const names = Object.keys(dims);
  return bindRelation(
    parseRelation(text),
    (n) => (Object.hasOwn(dims, n) ? { index: names.indexOf(n), quantity: dims[n]! } : undefined),
    unit,
  );
}

function bindError(
  text: string,
  dims: Record<string, SymbolQuantity>,
): { code: string; at: number | undefined } {
  try {
    bind(text, dims);
  } catch (e) {
    if (e instanceof ExpressionError) return { code: e.code, at: e.at };
    throw e;
  }
  throw new Error(`'${text}' was bound`);
}

describe('parseRelation', () => {
  it('reads a chain and lists its names in order', () => {
    expect(parseRelation('overall = boss + slot + web_photo + lug').names).toEqual([
      'overall',
      'boss',
      'slot',
      'web_photo',
      'lug',
    ]);
  });

  it('allows an expression on both sides', () => {
    const r = parseRelation('a + b = c - d');
    expect(r.lhs.t).toBe('bin');
    expect(r.rhs.t).toBe('bin');
  });

  it('refuses property access, indexing, matrices and objects at the offending character', () => {
    expect(refusal('x = a.b.c')).toEqual({ code: 'forbidden', at: 7 });
    expect(refusal('x = a[1]')).toEqual({ code: 'forbidden', at: 5 });
    expect(refusal('x = [1, 2]')).toEqual({ code: 'forbidden', at: 4 });
    expect(refusal('x = {a: 1}')).toEqual({ code: 'forbidden', at: 4 });
  });

  it('refuses a second assignment, comparisons, strings and conditionals', () => {
    expect(refusal('x = y = 1')).toEqual({ code: 'forbidden', at: 6 });
    expect(refusal('x = a == b')).toEqual({ code: 'forbidden', at: 6 });
    expect(refusal('x < y = 1')).toEqual({ code: 'forbidden', at: 2 });
    expect(refusal("x = 'abc'")).toEqual({ code: 'forbidden', at: 4 });
    expect(refusal('x = a ? b : c')).toEqual({ code: 'forbidden', at: 6 });
    expect(refusal('x = 1; y = 2')).toEqual({ code: 'forbidden', at: 5 });
  });

  it('refuses unknown functions, function definitions, import and unit creation with the name position', () => {
    expect(refusal('x = foo(a)')).toEqual({ code: 'forbidden', at: 4 });
    expect(refusal('f(t) = t')).toEqual({ code: 'forbidden', at: 0 });
    expect(refusal('x = import(a)')).toEqual({ code: 'forbidden', at: 4 });
    expect(refusal('x = createUnit(a)')).toEqual({ code: 'forbidden', at: 4 });
    expect(refusal('x = evaluate(a)')).toEqual({ code: 'forbidden', at: 4 });
    expect(refusal('x = 2 + sin')).toEqual({ code: 'forbidden', at: 8 });
  });

  it('refuses operator words, factorial, modulo and hex numbers', () => {
    expect(refusal('x = a mod b')).toEqual({ code: 'forbidden', at: 6 });
    expect(refusal('x = a and b')).toEqual({ code: 'forbidden', at: 6 });
    expect(refusal('x = 3!')).toEqual({ code: 'forbidden', at: 5 });
    expect(refusal('x = a % b')).toEqual({ code: 'forbidden', at: 6 });
    expect(refusal('x = 0x1F')).toEqual({ code: 'forbidden', at: 4 });
    expect(refusal('x = true')).toEqual({ code: 'forbidden', at: 4 });
  });

  it('reports syntax errors with a position', () => {
    expect(refusal('x + = y')).toEqual({ code: 'syntax', at: 4 });
    expect(refusal('x = (a')).toMatchObject({ code: 'syntax' });
    expect(refusal('x')).toEqual({ code: 'syntax', at: 1 });
    expect(refusal('= x')).toEqual({ code: 'syntax', at: 0 });
    expect(refusal('x = sqrt(a, b)')).toEqual({ code: 'syntax', at: 4 });
    expect(refusal('x = @')).toEqual({ code: 'syntax', at: 4 });
  });

  it('reads names of properties every object has (toString, constructor) as names, never as units or functions', () => {
    for (const name of ['toString', 'constructor', 'valueOf', 'hasOwnProperty', '__proto__']) {
      expect(parseRelation(`x = ${name} + 1`).names).toEqual(['x', name]);
      expect(bindError(`x = ${name}`, { x: 'length' })).toEqual({ code: 'unknown-name', at: 4 });
      expect(refusal(`x = ${name}(a)`)).toEqual({ code: 'forbidden', at: 4 });
    }
    const dims = Object.fromEntries([
      ['x', 'length'],
      ['toString', 'length'],
    ]) as Record<string, SymbolQuantity>;
    const r = bind('x = toString * 2', dims);
    expect(r.residual(Float64Array.of(7, 3))).toBe(1);
  });

  it('refuses quoted text and a unit mark after a name, at the start of the name', () => {
    expect(refusal('x = "abc"')).toEqual({ code: 'forbidden', at: 4 });
    expect(refusal('x = 1/8" + "5 cm"')).toEqual({ code: 'forbidden', at: 11 });
    expect(refusal('x = a°')).toEqual({ code: 'forbidden', at: 4 });
    expect(refusal('x = 2 in"')).toEqual({ code: 'forbidden', at: 6 });
    expect(() => parseExpression('"abc"')).toThrow(/text in quotes is not allowed/);
    // The marks themselves still read as units.
    expect(bind('x = 1/8" * cos(0°)', { x: 'length' }).residual(Float64Array.of(0.125))).toBe(0);
  });

  it('names an emoji whole in its message, and half of one as U+FFFD (messages are stored as JSON)', () => {
    expect(() => parseRelation('x = 😀')).toThrow("unexpected character '😀'");
    expect(refusal('x = 😀')).toEqual({ code: 'syntax', at: 4 });
    expect(() => parseRelation('x = \ude00')).toThrow("unexpected character '\ufffd'");
  });

  it('names an unknown function as it was written', () => {
    expect(() => parseRelation('x = "(a)')).toThrow(`unknown function '"'`);
  });

  it('parses a plain expression and refuses = in one', () => {
    expect(parseExpression('hypot(a, b) / 2').t).toBe('bin');
    expect(() => parseExpression('a = b')).toThrow(ExpressionError);
  });
});

describe('bindRelation', () => {
  it('computes the residual lhs − rhs', () => {
    const r = bind('overall = a + b', { overall: 'length', a: 'length', b: 'length' });
    expect(r.residual(Float64Array.of(6, 2, 3.5))).toBeCloseTo(0.5, 12);
    expect(r.affine).not.toBeNull();
  });

  it('converts unit literals to the model unit', () => {
    // 1/8 in = 3.175 mm exactly (25.4 mm/in, NIST SP 811).
    const r = bind('a = b + 1/8 in', { a: 'length', b: 'length' }, 'mm');
    expect(r.residual(Float64Array.of(5.175, 2))).toBeCloseTo(0, 12);
    const s = bind('a = b + 2 mm + 1"', { a: 'length', b: 'length' }, 'in');
    expect(s.residual(Float64Array.of(1 + 2 / 25.4, 0))).toBeCloseTo(0, 12);
  });

  it('evaluates trigonometry in degrees, exactly at 30° steps', () => {
    const r = bind('x = r * cos(t)', { x: 'length', r: 'length', t: 'angle' });
    expect(r.residual(Float64Array.of(25, 50, 60))).toBe(0);
    const s = bind('t = atan2(y, x)', { t: 'angle', y: 'length', x: 'length' });
    expect(s.residual(Float64Array.of(45, 1, 1))).toBeCloseTo(0, 12);
    const p = bind('t = asin(0.5) + acos(0.5)', { t: 'angle' });
    expect(p.residual(Float64Array.of(90))).toBeCloseTo(0, 12);
  });

  it('gives forward-mode derivatives that match central differences', () => {
    // Plain numbers (counts) so that every operator can appear without a unit mismatch.
    const dims = { z: 'count', a: 'count', b: 'count', t: 'angle' } as const;
    const r = bind(
      'z = hypot(a, b) * sin(t) + sqrt(a * b) - max(a, 2 * b) / (1 + abs(b)) + a ^ 3 - atan(a / b)',
      dims,
    );
    const x = Float64Array.of(1.3, 2.1, 0.7, 33);
    const g = new Float64Array(4);
    r.gradient(x, g);
    for (let j = 0; j < 4; j++) {
      const h = 1e-6;
      const xp = Float64Array.from(x);
      const xm = Float64Array.from(x);
      const v = r.vars[j]!;
      xp[v] = x[v]! + h;
      xm[v] = x[v]! - h;
      expect(g[j]).toBeCloseTo((r.residual(xp) - r.residual(xm)) / (2 * h), 5);
    }
  });

  it('refuses an unknown dimension at its position', () => {
    expect(bindError('x = a + nope', { x: 'length', a: 'length' })).toEqual({
      code: 'unknown-name',
      at: 8,
    });
  });

  it('refuses a length plus an angle as a unit mismatch at the operator', () => {
    expect(bindError('x = a + t', { x: 'length', a: 'length', t: 'angle' })).toEqual({
      code: 'unit-mismatch',
      at: 6,
    });
    expect(bindError('t = a', { t: 'angle', a: 'length' })).toEqual({
      code: 'unit-mismatch',
      at: 2,
    });
    expect(bindError('x = sin(a)', { x: 'count', a: 'length' })).toMatchObject({
      code: 'unit-mismatch',
    });
    expect(bindError('x = a + 3 deg', { x: 'length', a: 'length' })).toMatchObject({
      code: 'unit-mismatch',
    });
    expect(bindError('x = a * a', { x: 'length', a: 'length' })).toMatchObject({
      code: 'unit-mismatch',
    });
  });

  it('lets bare numbers, counts and angles combine as plain numbers do', () => {
    expect(() => bind('x = 2 * a + 0.5', { x: 'length', a: 'length' })).not.toThrow();
    expect(() => bind('step = 360 / n', { step: 'angle', n: 'count' })).not.toThrow();
    expect(() =>
      bind('x = sqrt(a * a + b ^ 2)', { x: 'length', a: 'length', b: 'length' }),
    ).not.toThrow();
  });

  it('refuses division by a constant zero', () => {
    expect(bindError('x = a / (2 - 2)', { x: 'length', a: 'length' })).toMatchObject({
      code: 'division-by-zero',
      at: 6,
    });
  });

  it('diagnoses division by zero at run time', () => {
    const r = bind('x = a / b', { x: 'length', a: 'length', b: 'count' });
    expect(r.diagnose(Float64Array.of(1, 1, 0))).toMatchObject({ code: 'division-by-zero', at: 6 });
    expect(r.diagnose(Float64Array.of(1, 1, 2))).toBeNull();
  });

  it('tells which relations are linear in a set of unknowns', () => {
    const r = bind('x = r * cos(t)', { x: 'length', r: 'length', t: 'angle' });
    expect(r.affine).toBeNull();
    expect(r.degreeIn((i) => i === 0)).toBe(1); // linear in x
    expect(r.degreeIn((i) => i === 2)).toBe(2); // not in t
  });
});

describe('robustness (property)', () => {
  const alphabet = 'ab x=+-*/^()., 0123456789sinqrtmaxhypot[]{}\'";:?!<>&|%e°\n';
  it('never crashes or hangs on random input: it parses or throws ExpressionError', () => {
    fc.assert(
      fc.property(
        fc.string({ unit: fc.constantFrom(...alphabet.split('')), maxLength: 30 }),
        (t) => {
          try {
            const r = parseRelation(t);
            const dims = Object.fromEntries(r.names.map((n) => [n, 'length' as const]));
            try {
              bind(t, dims).residual(new Float64Array(r.names.length).fill(1));
            } catch (e) {
              expect(e).toBeInstanceOf(ExpressionError);
            }
          } catch (e) {
            expect(e).toBeInstanceOf(ExpressionError);
            const at = (e as ExpressionError).at;
            if (at !== undefined) expect(at >= 0 && at <= t.length).toBe(true);
          }
        },
      ),
      { numRuns: 2000 },
    );
  });

  it('evaluates random arithmetic exactly as JavaScript does', () => {
    const leaf = fc.oneof(fc.constantFrom('a', 'b'), fc.integer({ min: 1, max: 9 }).map(String));
    const expr = fc.letrec<{ e: [string, (a: number, b: number) => number] }>((tie) => ({
      e: fc.oneof(
        { depthSize: 'small' },
        leaf.map((s): [string, (a: number, b: number) => number] => [
          s,
          (a, b) => (s === 'a' ? a : s === 'b' ? b : Number(s)),
        ]),
        fc
          .tuple(tie('e'), fc.constantFrom('+', '-', '*'), tie('e'))
          .map(([[s1, f1], op, [s2, f2]]): [string, (a: number, b: number) => number] => [
            `(${s1} ${op} ${s2})`,
            (a, b) =>
              op === '+'
                ? f1(a, b) + f2(a, b)
                : op === '-'
                  ? f1(a, b) - f2(a, b)
                  : f1(a, b) * f2(a, b),
          ]),
      ),
    })).e;
    fc.assert(
      fc.property(
        expr,
        fc.double({ min: -10, max: 10, noNaN: true }),
        fc.double({ min: -10, max: 10, noNaN: true }),
        ([s, f], a, b) => {
          const r = bindRelation(
            parseRelation(`y = ${s}`),
            (n) => ({ index: ['y', 'a', 'b'].indexOf(n), quantity: 'count' }),
            'in',
          );
          const want = f(a, b);
          expect(Math.abs(r.residual(Float64Array.of(0, a, b)) + want)).toBeLessThanOrEqual(
            1e-9 * (1 + Math.abs(want)),
          );
        },
      ),
      { numRuns: 500 },
    );
  });
});

describe('part-qualified names', () => {
  it('reads hornblock.bolt_x as one name and solves across parts', () => {
    expect(parseRelation('frame.bolt_x = hornblock.bolt_x + 0.5').names).toEqual([
      'frame.bolt_x',
      'hornblock.bolt_x',
    ]);
    const r = solveModel({
      format: 'fairsheet.model',
      version: 1,
      units: 'in',
      dimensions: [
        { name: 'hornblock.bolt_x', kind: 'stated', value: '5/16' },
        { name: 'frame.bolt_x', kind: 'derived' },
      ],
      relations: [{ id: 'line_up', expr: 'frame.bolt_x = hornblock.bolt_x + 4' }],
    });
    expect(r.status).toBe('solved');
    expect(r.values['frame.bolt_x']!.value).toBeCloseTo(4.3125, 12);
  });

  it('still refuses property access beyond one qualifier', () => {
    expect(() => parseRelation('a = frame.plate.x')).toThrow(ExpressionError);
  });
});
