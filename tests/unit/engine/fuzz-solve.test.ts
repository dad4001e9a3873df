// Bad-input properties of the solver, 10,000 generated models. fast-check draws a new seed every
// run and prints it with the shrunk counterexample on failure; pass that `seed` and `path` to
// fc.assert to replay it. The models are small on purpose: the property is about never throwing
// and answering within the time cap, not about size; the cap itself is hit by the cases after it.
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { RESERVED_NAMES } from '@shared/engine/expression';
import { DIMENSION_NAME } from '@shared/engine/model';
import type { SolveResult } from '@shared/engine/result';
import { solveModel, type SolveOptions } from '@shared/engine/solve';

const runs = { numRuns: 10_000 };

/**
 * How far past its time limit a solve may answer. The limit bounds the Newton iterations only;
 * reading, structure, stack-up and reconciliation come on top: about 1 ms for these small
 * models, but single cases measured up to 0.5 s when a garbage collection or a first compile
 * fell inside them (not reproducible on a re-run), on a shared 2-core machine. The margin
 * catches a solve that runs away, not one that is slow.
 */
const marginMs = 2000;

const errorCodes = [
  'schema',
  'duplicate-name',
  'reserved-name',
  'bad-value',
  'syntax',
  'forbidden',
  'unknown-name',
  'unit-mismatch',
  'division-by-zero',
  'not-finite',
  'singular',
  'no-convergence',
];

// Mostly names a model may use, some that look up something else in a plain object, and
// (rarely) ones the engine or the schema refuses.
const names = fc.oneof(
  { weight: 40, arbitrary: fc.constantFrom('a', 'b', 'c', 'x', 'y', 'z', 'theta', 'n', 'frame.w') },
  { weight: 6, arbitrary: fc.constantFrom('toString', 'constructor', '__proto__', 'valueOf') },
  { weight: 2, arbitrary: fc.constantFrom('pi', 'sin', 'in') },
  { weight: 1, arbitrary: fc.constantFrom('1bad', '') },
);
// Values as a builder writes them, and some no one should.
const written = fc.oneof(
  {
    weight: 20,
    arbitrary: fc.double({ min: -1e4, max: 1e4, noNaN: true, noDefaultInfinity: true }),
  },
  {
    weight: 20,
    arbitrary: fc.constantFrom(
      '1 3/16"',
      '0.750',
      '3.175 mm',
      '30°',
      `2' 6"`,
      '15 thou',
      '-0.5',
      '0',
      '2',
    ),
  },
  {
    weight: 2,
    arbitrary: fc.constantFrom(
      '1/0',
      'abc',
      '3 constructor',
      '9'.repeat(400),
      `0.${'0'.repeat(400)}1`,
    ),
  },
  { weight: 1, arbitrary: fc.constantFrom('', ' ') },
);
const quantityKind = fc.oneof(
  { weight: 8, arbitrary: fc.constant('length') },
  fc.constantFrom('angle', 'count'),
);
const tolerance = fc.oneof(
  { weight: 8, arbitrary: fc.constant({}) },
  { weight: 8, arbitrary: written.map((tol) => ({ tol })) },
  {
    weight: 8,
    arbitrary: fc.tuple(written, written).map(([tolPlus, tolMinus]) => ({ tolPlus, tolMinus })),
  },
  // Both kinds at once: the schema refuses it.
  { weight: 1, arbitrary: fc.tuple(written, written).map(([tol, tolPlus]) => ({ tol, tolPlus })) },
);

const dimension = fc.oneof(
  fc
    .record(
      {
        name: names,
        kind: fc.constantFrom('stated', 'scaled', 'assumed', 'asbuilt'),
        quantity: quantityKind,
        value: written,
      },
      { requiredKeys: ['name', 'kind', 'value'] },
    )
    .chain((d) => tolerance.map((t) => ({ ...d, ...t }))),
  fc.record(
    { name: names, kind: fc.constant('derived'), quantity: quantityKind, guess: written },
    { requiredKeys: ['name', 'kind'] },
  ),
);

/** Relations over some names: linear, non-linear, cyclic, inconsistent and broken ones. */
function relations(over: fc.Arbitrary<string>) {
  const { term } = fc.letrec<{ term: string }>((tie) => ({
    term: fc.oneof(
      { depthSize: 'small', maxDepth: 4 },
      over,
      fc.constantFrom('1', '2', '0', '0.5', '1/8"', '30°', '3 mm', 'pi'),
      fc
        .tuple(tie('term'), fc.constantFrom('+', '-', '*', '/', '^'), tie('term'))
        .map(([a, op, b]) => `${a} ${op} ${b}`),
      tie('term').map((a) => `(${a})`),
      tie('term').map((a) => `-${a}`),
      fc
        .tuple(
          fc.constantFrom('sqrt', 'abs', 'sin', 'cos', 'tan', 'asin', 'acos', 'atan'),
          tie('term'),
        )
        .map(([f, a]) => `${f}(${a})`),
      fc
        .tuple(fc.constantFrom('min', 'max', 'hypot', 'atan2'), tie('term'), tie('term'))
        .map(([f, a, b]) => `${f}(${a}, ${b})`),
    ),
  }));
  const text = fc.oneof(
    { weight: 8, arbitrary: fc.tuple(term, term).map(([l, r]) => `${l} = ${r}`) },
    // Cycles, self-reference, no real root, contradictions and text that is no relation.
    fc
      .tuple(over, over, over)
      .chain(([p, q, r]) =>
        fc.constantFrom(
          `${p} = ${q} + 1`,
          `${q} = ${p} - 1`,
          `${p} = 2 * ${p} + 1`,
          `${p} = 1 / ${p}`,
          `${p}^2 + 1 = 0`,
          `${p}^${p} = 3`,
          `${p} * ${q} = 1`,
          `${p} + ${q} = ${r}`,
          `hypot(${p}, ${q}) = ${r}`,
          `${p} = ${q}`,
          `${p} = ${q} / (${r} - ${r})`,
          `${p} = `,
          `${p} = toString(${q})`,
          `${p} = "${q}"`,
          'x = evaluate("1")',
        ),
      ),
  );
  // Ids by position, now and then one that repeats, looks up a prototype or is empty.
  const oddId = fc.constantFrom('r0', '__proto__', 'constructor', '');
  return fc
    .array(
      fc.record(
        {
          id: fc.oneof({ weight: 20, arbitrary: fc.constant(null) }, oddId),
          expr: text,
          enabled: fc.oneof({ weight: 5, arbitrary: fc.constant(true) }, fc.constant(false)),
        },
        { requiredKeys: ['id', 'expr'] },
      ),
      { maxLength: 5 },
    )
    .map((rs) => rs.map((r, i) => ({ ...r, id: r.id ?? `r${i}` })));
}

/**
 * Relations are drawn over slots (`§0`…`§6`), each then replaced by the name of a dimension of
 * the same model, so most relations bind; a tenth of the names are drawn from the whole pool.
 */
const slot = fc.oneof(
  { weight: 9, arbitrary: fc.integer({ min: 0, max: 6 }).map((k) => `§${k}`) },
  names,
);
const slottedRelations = relations(slot);

const model = fc.oneof(
  {
    weight: 12,
    arbitrary: fc
      .tuple(
        fc.oneof(
          {
            weight: 6,
            arbitrary: fc.uniqueArray(dimension, { selector: (d) => d.name, maxLength: 7 }),
          },
          fc.array(dimension, { maxLength: 7 }),
        ),
        slottedRelations,
        fc.constantFrom('in', 'mm'),
      )
      .map(([dimensions, rels, units]) => ({
        format: 'fairsheet.model',
        version: 1,
        units,
        dimensions,
        relations: rels.map((r) => ({
          ...r,
          expr: r.expr.replace(/§(\d)/g, (_, k: string) =>
            dimensions.length ? dimensions[Number(k) % dimensions.length]!.name : 'a',
          ),
        })),
      })),
  },
  // Not a model at all, or one of another format.
  fc.anything(),
  fc.record({
    format: fc.constantFrom('fairsheet.model', 'other'),
    version: fc.constantFrom(1, 2, '1'),
    units: fc.constantFrom('in', 'mm', 'furlong'),
    dimensions: fc.oneof(fc.array(fc.anything(), { maxLength: 3 }), fc.anything()),
    relations: fc.oneof(fc.array(fc.anything(), { maxLength: 3 }), fc.anything()),
  }),
);

const options = fc.record(
  {
    timeLimitMs: fc.integer({ min: 0, max: 10 }),
    maxIterations: fc.integer({ min: 0, max: 200 }),
    valuesOnly: fc.boolean(),
    monteCarlo: fc.record({ samples: fc.integer({ min: 0, max: 20 }), seed: fc.nat() }),
  },
  { requiredKeys: ['timeLimitMs'] },
);

/** A plain check: cheaper than expect() in a loop of 10,000 cases. */
function check(ok: boolean, what: string, r: SolveResult): void {
  if (!ok) throw new Error(`${what}: ${JSON.stringify(r).slice(0, 2000)}`);
}

/** What every answer must look like. */
function expectWellFormed(r: SolveResult, input: unknown): void {
  check(['invalid', 'contradictory', 'incomplete', 'solved'].includes(r.status), 'status', r);
  for (const e of r.errors) {
    check(errorCodes.includes(e.code), `error code ${e.code}`, r);
    check(typeof e.message === 'string' && e.message.length > 0, 'error message', r);
    if (e.at !== undefined) check(Number.isInteger(e.at) && e.at >= 0, 'error position', r);
  }
  if (r.status === 'solved') check(r.errors.length === 0, 'solved without errors', r);
  for (const [name, v] of Object.entries(r.values)) {
    check(v.value === null || Number.isFinite(v.value), `values.${name} finite or null`, r);
  }
  // The answer travels as JSON: it must survive the trip with every value entry.
  const back = JSON.parse(JSON.stringify(r)) as SolveResult;
  check(Object.keys(back.values).length === Object.keys(r.values).length, 'JSON trip', r);
  // Every dimension the model defines once under a usable name has a value entry.
  if (r.errors.every((e) => e.code !== 'schema')) {
    const dims = (input as { dimensions: Array<{ name: string }> }).dimensions;
    const count = new Map<string, number>();
    for (const d of dims) count.set(d.name, (count.get(d.name) ?? 0) + 1);
    for (const [name, n] of count) {
      if (n === 1 && DIMENSION_NAME.test(name) && !RESERVED_NAMES.has(name))
        check(Object.hasOwn(back.values, name), `values.${name} present`, r);
    }
  }
}

describe('solveModel on bad input (property, 10,000 models)', () => {
  it('random models, options and garbage: an answer, never a throw, within the time limit plus a margin', () => {
    let slowest = 0;
    fc.assert(
      fc.property(model, options, (m, o) => {
        const started = performance.now();
        const r = solveModel(m, o as SolveOptions);
        const took = performance.now() - started;
        slowest = Math.max(slowest, took);
        expectWellFormed(r, m);
        check(took <= o.timeLimitMs + marginMs, `answered in ${took} ms`, r);
      }),
      runs,
    );
    expect(slowest).toBeGreaterThan(0);
  }, 300_000);
});

describe('solveModel at its time limit', () => {
  const given = (name: string, value: number) => ({ name, kind: 'stated', value, tol: 0.001 });
  const derived = (name: string) => ({ name, kind: 'derived' });

  it('a non-linear block given no time at all answers at once and says the time limit stopped it', () => {
    const m = {
      format: 'fairsheet.model',
      version: 1,
      units: 'mm',
      dimensions: [given('r', 13), given('h', 5), derived('x')],
      relations: [{ id: 'circle', expr: 'x^2 + h^2 = r^2' }],
    };
    // Without a limit the same block converges: the limit is what stops it.
    expect(solveModel(m).values.x!.value).toBeCloseTo(12, 9); // 5-12-13 triangle: √(13² − 5²)
    const started = performance.now();
    const r = solveModel(m, { timeLimitMs: 0, maxIterations: 1e9 });
    expect(performance.now() - started).toBeLessThan(marginMs);
    expect(r.status).toBe('invalid');
    expect(r.values.x!.value).toBeNull();
    expect(r.errors).toEqual([
      expect.objectContaining({
        code: 'no-convergence',
        relation: 'circle',
        timeLimitMs: 0,
        message: expect.stringMatching(/stopped by the time limit of 0 ms before it converged/),
      }),
    ]);
  });

  it('a model of 5,000 non-linear blocks with a 5 ms limit answers and says which blocks the limit stopped', () => {
    const n = 5000;
    const dims = [];
    const relations = [];
    for (let i = 0; i < n; i++) {
      dims.push(given(`g${i}`, 3 + (i % 7)), derived(`x${i}`));
      relations.push({ id: `r${i}`, expr: `x${i} * x${i} = g${i} * g${i} + 16` });
    }
    const m = { format: 'fairsheet.model', version: 1, units: 'mm', dimensions: dims, relations };
    const started = performance.now();
    const r = solveModel(m, { timeLimitMs: 5, maxIterations: 1e9, valuesOnly: true });
    const took = performance.now() - started;
    const stopped = r.errors.filter((e) => e.timeLimitMs === 5);
    expect(stopped.length).toBeGreaterThan(0);
    expect(stopped.every((e) => e.code === 'no-convergence')).toBe(true);
    expect(r.status).toBe('invalid');
    // Each block is either solved (x = √(g² + 4²)) or named as stopped, never left unexplained.
    const stoppedIds = new Set(stopped.map((e) => e.relation));
    expect(r.errors).toHaveLength(stopped.length);
    for (let i = 0; i < n; i++) {
      const g = 3 + (i % 7);
      const x = r.values[`x${i}`]!.value;
      if (stoppedIds.has(`r${i}`)) expect(x).toBeNull();
      else expect(x).toBeCloseTo(Math.hypot(g, 4), 9);
    }
    // Everything outside the Newton iterations (reading 10,000 dimensions, the structure) is
    // not under the limit; the margin for a model this size is ten times the small one's.
    expect(took).toBeLessThan(5 + 10 * marginMs);
  });
});
