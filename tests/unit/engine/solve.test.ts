import fc from 'fast-check';
import { Matrix, solve as mlSolve } from 'ml-matrix';
import { describe, expect, it } from 'vitest';
import { solveModel, type SolveResult } from '@shared/engine';

type Dim = Record<string, unknown> & { name: string; kind: string };
const model = (
  dimensions: Dim[],
  relations: Array<[string, string]>,
  units: 'in' | 'mm' = 'in',
) => ({
  format: 'fairsheet.model',
  version: 1,
  units,
  dimensions,
  relations: relations.map(([id, expr]) => ({ id, expr })),
});
const given = (
  name: string,
  value: string | number,
  tol?: string | number,
  kind = 'stated',
): Dim => (tol === undefined ? { name, kind, value } : { name, kind, value, tol });
const derived = (name: string, extra: Record<string, unknown> = {}): Dim => ({
  name,
  kind: 'derived',
  ...extra,
});
const value = (r: SolveResult, name: string) => r.values[name]!.value!;

describe('solveModel: chains and blocks', () => {
  it('solves a chain in dependency order and keeps its trace', () => {
    const r = solveModel(
      model(
        [
          given('overall', '6 1/4', '0.005'),
          given('boss', '0.750', '0.002'),
          given('web', '1.52', '0.03'),
          derived('slot'),
          derived('rest'),
        ],
        [
          ['r2', 'rest = slot - web'],
          ['r1', 'overall = boss + slot + web'],
        ],
      ),
    );
    expect(r.status).toBe('solved');
    expect(value(r, 'slot')).toBeCloseTo(6.25 - 0.75 - 1.52, 12);
    expect(value(r, 'rest')).toBeCloseTo(6.25 - 0.75 - 2 * 1.52, 12);
    expect(r.values.rest!.from).toEqual(['r2']);
    expect(r.values.rest!.trace.relations.map((t) => t.id)).toEqual(['r1', 'r2']);
    expect(r.values.rest!.trace.inputs.map((t) => t.name)).toEqual(['overall', 'boss', 'web']);
    expect(r.values.boss).toMatchObject({ value: 0.75, worstCase: 0.002, rss: 0.002, from: [] });
  });

  it('solves coupled linear relations as one block', () => {
    const r = solveModel(
      model(
        [given('p', 10, 0.1), given('q', 2, 0.1), derived('x'), derived('y')],
        [
          ['sum', 'x + y = p'],
          ['diff', 'x - y = q'],
        ],
      ),
    );
    expect(value(r, 'x')).toBeCloseTo(6, 12);
    expect(value(r, 'y')).toBeCloseTo(4, 12);
    expect(r.values.x!.from).toEqual(['sum', 'diff']);
    // x = (p + q)/2: sensitivities ½ and ½.
    expect(r.values.x!.contributors.map((c) => c.sensitivity)).toEqual([
      expect.closeTo(0.5, 12),
      expect.closeTo(0.5, 12),
    ]);
  });

  it('solves a cycle through three relations (one strongly connected block)', () => {
    const r = solveModel(
      model(
        [given('a', 6, 0.01), given('b', 1, 0.01), derived('x'), derived('y'), derived('z')],
        [
          ['c1', 'x = y + b'],
          ['c2', 'y = z + b'],
          ['c3', 'z + x = a'],
        ],
      ),
    );
    expect(r.values.x!.from).toEqual(['c1', 'c2', 'c3']);
    // x = z + 2 and z + x = 6 → z = 2, y = 3, x = 4.
    expect(value(r, 'x')).toBeCloseTo(4, 12);
    expect(value(r, 'y')).toBeCloseTo(3, 12);
    expect(value(r, 'z')).toBeCloseTo(2, 12);
  });

  it('places pitch-circle holes from the PCD (6 holes, PCD 100)', () => {
    // check-values §10, 6 holes on PCD 100 from 0°: (25, 43.30127) for hole 1.
    const r = solveModel(
      model(
        [
          given('pcd', '100 mm', '0.05 mm'),
          given('n', 6, undefined),
          derived('x1'),
          derived('y1'),
        ].map((d) => (d.name === 'n' ? { ...d, quantity: 'count' } : d)),
        [
          ['hx', 'x1 = pcd / 2 * cos(360 / n)'],
          ['hy', 'y1 = pcd / 2 * sin(360 / n)'],
        ],
        'mm',
      ),
    );
    expect(value(r, 'x1')).toBeCloseTo(25, 10);
    expect(value(r, 'y1')).toBeCloseTo(43.30127, 5);
    expect(r.values.x1!.contributors[0]).toMatchObject({
      name: 'pcd',
      sensitivity: expect.closeTo(0.25, 12),
    });
  });

  it('finds a hole from two distances by damped Newton (non-linear 2×2 block)', () => {
    // The hole is on a 50 mm radius about the centre and 50 mm from a point 50 mm to the right:
    // the circles meet at (25, ±43.30127); the guess picks the upper one.
    const r = solveModel(
      model(
        [
          given('r', '50 mm', '0.02 mm'),
          given('d', '50 mm', '0.02 mm'),
          given('off', '50 mm', '0.01 mm'),
          derived('x'),
          derived('y', { guess: '30 mm' }),
        ],
        [
          ['circle', 'hypot(x, y) = r'],
          ['reach', 'hypot(x - off, y) = d'],
        ],
        'mm',
      ),
    );
    expect(r.status).toBe('solved');
    expect(value(r, 'x')).toBeCloseTo(25, 9);
    expect(value(r, 'y')).toBeCloseTo(43.30127, 5);
    const lower = solveModel(
      model(
        [
          given('r', 50, 0.02),
          given('d', 50, 0.02),
          given('off', 50, 0.01),
          derived('x'),
          derived('y', { guess: -30 }),
        ],
        [
          ['circle', 'hypot(x, y) = r'],
          ['reach', 'hypot(x - off, y) = d'],
        ],
        'mm',
      ),
    );
    expect(value(lower, 'y')).toBeCloseTo(-43.30127, 5);
  });

  it('reports a non-linear block that cannot converge, with its residual', () => {
    // Two circles 200 mm apart with radii 50: no intersection.
    const r = solveModel(
      model(
        [given('r', 50), given('off', 200), derived('x'), derived('y', { guess: 10 })],
        [
          ['circle', 'hypot(x, y) = r'],
          ['reach', 'hypot(x - off, y) = r'],
        ],
        'mm',
      ),
    );
    expect(r.status).toBe('invalid');
    expect(r.errors[0]).toMatchObject({ code: 'no-convergence', relation: 'circle' });
    expect(r.errors[0]!.residual).toBeGreaterThan(1);
    expect(r.values.x!.value).toBeNull();
  });

  it('says when the time limit, not the block, stopped a non-linear solve', () => {
    const m = model(
      [given('r', 13), given('h', 5), derived('x')],
      [['circle', 'x^2 + h^2 = r^2']],
      'mm',
    );
    const r = solveModel(m, { timeLimitMs: 0, maxIterations: 1e9 });
    expect(r.errors).toEqual([
      expect.objectContaining({ code: 'no-convergence', relation: 'circle', timeLimitMs: 0 }),
    ]);
    expect(r.errors[0]!.message).toMatch(/stopped by the time limit of 0 ms before it converged/);
    // Out of iterations instead: the old message, and no time limit named.
    const out = solveModel(m, { maxIterations: 0 });
    expect(out.errors[0]!.message).toMatch(/did not converge/);
    expect(out.errors[0]!.timeLimitMs).toBeUndefined();
    expect(value(solveModel(m), 'x')).toBeCloseTo(12, 9); // 5-12-13 triangle
  });

  it('gives derived angles in degrees', () => {
    const r = solveModel(
      model(
        [given('rise', 1, 0.001), given('run', 1, 0.001), derived('tilt', { quantity: 'angle' })],
        [['t', 'tan(tilt) = rise / run']],
      ),
    );
    expect(value(r, 'tilt')).toBeCloseTo(45, 9);
  });
});

describe('solveModel: redundancy', () => {
  const chain = (overall: string) =>
    model(
      [given('overall', overall), given('a', '1.500'), given('b', '2.250'), given('c', '2 1/2')],
      [['total', 'overall = a + b + c']],
    );

  it('reports a redundant relation that closes within tolerance as a check', () => {
    // Worst case allowed: 0.005 + 0.005 + 0.005 + 1/64 (implied tolerances).
    const r = solveModel(chain('6.260'));
    expect(r.status).toBe('solved');
    expect(r.contradictions).toEqual([]);
    expect(r.checks).toHaveLength(1);
    expect(r.checks[0]!.residual).toBeCloseTo(0.01, 12);
    expect(r.checks[0]!.allowed).toBeCloseTo(0.015 + 1 / 64, 12);
  });

  it('reports a chain that does not add up as a contradiction, loosest value first', () => {
    const r = solveModel(chain('6.375'));
    expect(r.status).toBe('contradictory');
    const c = r.contradictions[0]!;
    expect(c.relation).toBe('total');
    expect(c.residual).toBeCloseTo(0.125, 12);
    // A single closing relation cannot tell its inputs apart (all explain it fully); the
    // fraction c = 2 1/2 (±1/64) needs the smallest correction relative to its tolerance.
    expect(c.suspects[0]).toMatchObject({
      name: 'c',
      score: expect.closeTo(1, 9),
      correction: expect.closeTo(0.125, 12),
    });
  });

  it('names the value shared by two failing chains and not by the agreeing one', () => {
    // b is misprinted by 1/8: both chains through b fail, the chain without it closes.
    const r = solveModel(
      model(
        [
          given('ov1', '4.000', '0.002'),
          given('ov2', '3.250', '0.002'),
          given('ov3', '2.000', '0.002'),
          given('a', '1.000', '0.002'),
          given('b', '2.125', '0.002'),
          given('c', '1.250', '0.002'),
          given('d', '1.000', '0.002'),
        ],
        [
          ['one', 'ov1 = a + b + d'],
          ['two', 'ov2 = b + d + 0.25'],
          ['three', 'ov3 = a + d'],
        ],
      ),
    );
    expect(r.contradictions.map((c) => c.relation)).toEqual(['one', 'two']);
    for (const c of r.contradictions) {
      expect(c.suspects[0]!.name).toBe('b');
      expect(c.suspects[0]!.correction).toBeCloseTo(-0.125, 9);
      expect(c.suspects[0]!.score).toBeCloseTo(1, 9);
      expect(c.suspects[1]!.score).toBeLessThan(0.9);
    }
    expect(r.checks.map((c) => c.relation)).toEqual(['three']);
  });

  it('never names an as-built value as a suspect', () => {
    const r = solveModel(
      model(
        [
          given('overall', '6.375', '0.001', 'asbuilt'),
          given('a', '1.500', '0.001'),
          given('b', '4.750', '0.05'),
        ],
        [['total', 'overall = a + b']],
      ),
    );
    expect(r.status).toBe('contradictory');
    const names = r.contradictions[0]!.suspects.map((s) => s.name);
    expect(names).not.toContain('overall');
    expect(names[0]).toBe('b');
  });

  it('checks a redundant relation through derived values (total derivative)', () => {
    // slot from r1, then r2 checks slot against c + d: allowed is the sum over all five inputs.
    const r = solveModel(
      model(
        [
          given('ov', 6, 0.01),
          given('a', 1, 0.01),
          given('b', 1, 0.01),
          given('c', 3, 0.01),
          given('d', 1.02, 0.01),
          derived('slot'),
        ],
        [
          ['r1', 'ov = a + slot + b'],
          ['r2', 'slot = c + d'],
        ],
      ),
    );
    expect(r.checks[0]).toMatchObject({
      relation: 'r2',
      residual: expect.closeTo(-0.02, 12),
      allowed: expect.closeTo(0.05, 12),
    });
    expect(r.checks[0]!.relations).toEqual(['r1', 'r2']);
  });
});

describe('solveModel: incomplete models', () => {
  it('says how many dimensions are missing and which to measure', () => {
    const r = solveModel(
      model(
        [
          given('overall', 6, 0.01),
          given('a', 1, 0.01),
          derived('x'),
          derived('y'),
          derived('z'),
          derived('lone'),
        ],
        [
          ['r1', 'overall = a + x + y'],
          ['r2', 'z = x + 1'],
        ],
      ),
    );
    expect(r.status).toBe('incomplete');
    expect(r.needs).toBe(2);
    expect([...r.undetermined].sort()).toEqual(['lone', 'x', 'y', 'z']);
    const group = r.openGroups.find((g) => g.unknowns.includes('x'))!;
    expect(group.needs).toBe(1);
    expect(group.measure).toHaveLength(1);
    expect(r.values.x!.value).toBeNull();
    expect(r.openGroups.find((g) => g.unknowns.includes('lone'))!.needs).toBe(1);
  });
});

describe('solveModel: errors', () => {
  const codes = (r: SolveResult) => r.errors.map((e) => e.code);

  it('reports a schema error without solving', () => {
    const r = solveModel({ format: 'fairsheet.model', version: 1, units: 'yards', dimensions: [] });
    expect(r.status).toBe('invalid');
    expect(codes(r)).toEqual(['schema']);
    expect(solveModel('not a model').status).toBe('invalid');
    const bad = solveModel(model([{ name: 'a', kind: 'stated' }], []));
    expect(bad.errors[0]).toMatchObject({ code: 'schema', dimension: 'a' });
  });

  it('reports a duplicate dimension name and a duplicate relation id', () => {
    const r = solveModel(
      model(
        [given('a', 1), given('a', 2), derived('x')],
        [
          ['r', 'x = a'],
          ['r', 'x = 2 * a'],
        ],
      ),
    );
    expect(codes(r)).toEqual(['duplicate-name', 'duplicate-name']);
    expect(r.errors[0]!.dimension).toBe('a');
    expect(r.errors[1]!.relation).toBe('r');
  });

  it('reports a reserved name, an unreadable value and an angle given to a length', () => {
    const r = solveModel(
      model([given('mm', 1), given('a', '1 1/2 furlong'), given('b', '30°')], []),
    );
    expect(codes(r)).toEqual(['reserved-name', 'bad-value', 'bad-value']);
    expect(r.errors[1]).toMatchObject({ dimension: 'a', at: 6 });
    expect(r.errors[2]!.message).toMatch(/unit mismatch/);
  });

  it('reserves __proto__, which would otherwise vanish from the values; other object words are names', () => {
    const r = solveModel(
      model(
        [given('__proto__', 1), given('constructor', 2), given('toString', 3), derived('x')],
        [['sum', 'x = constructor + toString']],
      ),
    );
    expect(r.errors).toEqual([
      expect.objectContaining({ code: 'reserved-name', dimension: '__proto__' }),
    ]);
    expect(Object.keys(r.values)).toEqual(['constructor', 'toString', 'x']);
    expect(value(r, 'x')).toBe(5);
    expect(Object.getPrototypeOf(r.values)).toBe(Object.prototype);
  });

  it('reports unknown names, syntax errors and forbidden constructs with relation and position', () => {
    const r = solveModel(
      model(
        [given('a', 1), derived('x'), derived('y'), derived('z')],
        [
          ['r1', 'x = a + nope'],
          ['r2', 'y = (a'],
          ['r3', 'z = a.b.c'],
        ],
      ),
    );
    expect(r.errors).toEqual([
      expect.objectContaining({ code: 'unknown-name', relation: 'r1', at: 8 }),
      expect.objectContaining({ code: 'syntax', relation: 'r2' }),
      expect.objectContaining({ code: 'forbidden', relation: 'r3', at: 7 }),
    ]);
  });

  it('reports a unit mismatch between a length and an angle', () => {
    const r = solveModel(
      model(
        [given('a', 1), given('t', '30°', undefined), derived('x')].map((d) =>
          d.name === 't' ? { ...d, quantity: 'angle' } : d,
        ),
        [['r1', 'x = a + t']],
      ),
    );
    expect(r.errors[0]).toMatchObject({ code: 'unit-mismatch', relation: 'r1', at: 6 });
  });

  it('reports division by zero when a given value makes a divisor zero', () => {
    const count = (d: Dim) => ({ ...d, quantity: 'count' });
    const r = solveModel(
      model([given('a', 1), count(given('b', 0)), derived('x')], [['r1', 'x = a / b']]),
    );
    expect(r.errors[0]).toMatchObject({ code: 'division-by-zero', relation: 'r1', at: 6 });
    const check = solveModel(
      model([count(given('a', 1)), count(given('b', 0))], [['r1', 'a = 1 / b']]),
    );
    expect(check.errors[0]).toMatchObject({ code: 'division-by-zero', relation: 'r1' });
  });

  it('reports dependent relations that cannot fix their unknowns', () => {
    const r = solveModel(
      model(
        [given('p', 1), given('q', 2), derived('x'), derived('y')],
        [
          ['r1', 'x + y = p'],
          ['r2', '2 * x + 2 * y = q'],
        ],
      ),
    );
    expect(r.errors[0]).toMatchObject({ code: 'singular', relation: 'r1' });
  });

  it('skips a disabled relation', () => {
    const m = model([given('a', 1), derived('x')], [['r1', 'x = a']]);
    (m.relations[0] as Record<string, unknown>).enabled = false;
    const r = solveModel(m);
    expect(r.status).toBe('incomplete');
  });

  it('status: invalid outranks contradictory, which outranks incomplete', () => {
    const r = solveModel(
      model(
        [given('a', 1, 0.001), given('b', 2, 0.001), derived('x'), derived('y')],
        [
          ['bad', 'a = b'],
          ['open', 'x = y'],
        ],
      ),
    );
    expect(r.status).toBe('contradictory');
    expect(r.needs).toBe(1);
    const m = model(
      [given('a', 1, 0.001), given('b', 2, 0.001), derived('x')],
      [
        ['bad', 'a = b'],
        ['broken', 'x = ('],
      ],
    );
    expect(solveModel(m).status).toBe('invalid');
  });
});

describe('solveModel: properties', () => {
  it('solves random coupled linear systems as ml-matrix does', () => {
    fc.assert(
      fc.property(
        fc.integer({ min: 1, max: 12 }),
        fc.integer({ min: 1, max: 2 ** 31 - 2 }),
        (n, seed) => {
          let s = seed;
          const rnd = () => ((s = (s * 16807) % 2147483647) / 2147483647) * 2 - 1;
          // Diagonally dominant with random sparsity: well-conditioned, any block structure.
          const A = Array.from({ length: n }, (_, i) =>
            Array.from({ length: n }, (_, j) =>
              i === j ? n + 2 : rnd() < 0 ? 0 : Number(rnd().toFixed(3)),
            ),
          );
          const b = Array.from({ length: n }, () => Number((rnd() * 10).toFixed(3)));
          const dims = [
            ...b.map((v, i) => given(`g${i}`, v, 0.01)),
            ...b.map((_, i) => derived(`x${i}`)),
          ];
          const rels = A.map((row, i): [string, string] => [
            `e${i}`,
            `${row.map((a, j) => (a === 0 ? '' : `${a < 0 ? '-' : '+'} ${Math.abs(a)} * x${j}`)).join(' ')} = g${i}`,
          ]);
          const r = solveModel(model(dims, rels, 'mm'));
          expect(r.status).toBe('solved');
          const ref = mlSolve(new Matrix(A), Matrix.columnVector(b)).to1DArray();
          ref.forEach((v, i) =>
            expect(Math.abs(value(r, `x${i}`) - v)).toBeLessThan(1e-9 * (1 + Math.abs(v))),
          );
          // The stack-up of x = A⁻¹g: sensitivities are the rows of A⁻¹.
          const inv = mlSolve(new Matrix(A), Matrix.eye(n));
          const sens = Object.fromEntries(
            r.values.x0!.contributors.map((c) => [c.name, c.sensitivity]),
          );
          for (let j = 0; j < n; j++) expect(sens[`g${j}`] ?? 0).toBeCloseTo(inv.get(0, j), 9);
        },
      ),
      { numRuns: 300 },
    );
  });

  it('never crashes or hangs on random models', () => {
    const names = ['a', 'b', 'c', 'x', 'y'];
    const piece = fc.constantFrom(
      'a',
      'b',
      'c',
      'x',
      'y',
      '2',
      '0',
      '+',
      '-',
      '*',
      '/',
      '^',
      '(',
      ')',
      'sqrt(',
      'hypot(',
      ',',
      'sin(',
      ' ',
      'atan2(',
    );
    const exprArb = fc.array(piece, { maxLength: 10 }).map((p) => p.join(''));
    fc.assert(
      fc.property(
        fc.array(fc.tuple(exprArb, exprArb), { maxLength: 4 }),
        fc.array(fc.constantFrom('stated', 'derived', 'asbuilt', 'scaled', 'assumed'), {
          minLength: 5,
          maxLength: 5,
        }),
        fc.array(fc.double({ min: -5, max: 5, noNaN: true }), { minLength: 5, maxLength: 5 }),
        (rels, kinds, vals) => {
          const dims = names.map((n, i) =>
            kinds[i] === 'derived' ? derived(n) : given(n, vals[i]!, 0.01, kinds[i]),
          );
          const r = solveModel(
            model(
              dims,
              rels.map(([l, rr], i) => [`r${i}`, `${l} = ${rr}`]),
            ),
            { timeLimitMs: 200, maxIterations: 30 },
          );
          expect(['invalid', 'contradictory', 'incomplete', 'solved']).toContain(r.status);
          expect(() => JSON.stringify(r)).not.toThrow();
        },
      ),
      { numRuns: 500 },
    );
  });
});
