// The engine's size limits: each one refused as an ExpressionError (or a schema issue) that
// names it, never a stack overflow; and the sizes just inside each limit still read and solve.
import { describe, expect, it } from 'vitest';
import {
  EXPRESSION_LIMITS,
  ExpressionError,
  MODEL_LIMITS,
  evaluateFeatures,
  modelSchema,
  parseExpression,
  parseRelation,
  solveModel,
  type FairsheetModelInput,
} from '@shared/engine';
import { solveBody } from '@shared/api';
import { kestrelModel } from '../../fixtures/kestrel-model';

function refusal(f: () => unknown): ExpressionError {
  try {
    f();
  } catch (e) {
    if (e instanceof ExpressionError) return e;
    throw new Error(`threw ${(e as Error)?.name}: ${(e as Error)?.message}`);
  }
  throw new Error('was not refused');
}

const stated = (name: string, value = 1) => ({ name, kind: 'stated' as const, value, tol: 0.01 });

function modelWith(expr: string): FairsheetModelInput {
  return {
    format: 'fairsheet.model',
    version: 1,
    units: 'mm',
    dimensions: [stated('a'), stated('b', 2), { name: 'x', kind: 'derived' }],
    relations: [{ id: 'r', expr }],
  };
}

const sum = (terms: number, name = 'a') => Array(terms).fill(name).join(' + ');

describe('expression limits', () => {
  it('refuses a relation over the character limit at the first character past it', () => {
    const text = `x = ${sum(5000)}`; // the 5,000-term sum of issue 14
    const e = refusal(() => parseRelation(text));
    expect(e.code).toBe('over-limit');
    expect(e.at).toBe(EXPRESSION_LIMITS.relationCharacters);
    expect(e.message).toBe(
      `a relation is at most 4,000 characters; this one has ${text.length.toLocaleString('en-GB')}`,
    );
  });

  it('refuses an expression over the character limit', () => {
    const e = refusal(() => parseExpression('1'.padEnd(EXPRESSION_LIMITS.characters + 1, ' ')));
    expect(e).toMatchObject({ code: 'over-limit', at: EXPRESSION_LIMITS.characters });
    expect(e.message).toMatch(/at most 2,000 characters; this one has 2,001/);
  });

  it('refuses parentheses nested past the limit at the opening one, before mathjs reads them', () => {
    const n = EXPRESSION_LIMITS.nesting;
    expect(parseExpression('('.repeat(n) + 'a' + ')'.repeat(n))).toMatchObject({ t: 'sym' });
    const e = refusal(() => parseExpression('('.repeat(n + 1) + 'a' + ')'.repeat(n + 1)));
    expect(e).toMatchObject({ code: 'over-limit', at: n });
    expect(e.message).toBe('parentheses are nested more than 64 deep');
    // Function calls count their own parentheses.
    expect(
      refusal(() => parseExpression('sqrt('.repeat(n + 1) + 'a' + ')'.repeat(n + 1))).code,
    ).toBe('over-limit');
  });

  it('refuses a chain of operations deeper than the limit, and reads one at the limit', () => {
    // A sum of n terms is n − 1 additions inside one another.
    const within = modelWith(`x = ${sum(EXPRESSION_LIMITS.depth)}`);
    expect(solveModel(within).values.x!.value).toBeCloseTo(EXPRESSION_LIMITS.depth, 9);
    const e = refusal(() => parseExpression(sum(EXPRESSION_LIMITS.depth + 2)));
    expect(e.code).toBe('over-limit');
    expect(e.message).toMatch(/more than 200 operations inside one another/);
    // Unary minus and powers nest the same way.
    expect(refusal(() => parseExpression('-'.repeat(300) + 'a')).code).toBe('over-limit');
    expect(refusal(() => parseExpression(Array(300).fill('2').join('^'))).code).toBe('over-limit');
    expect(refusal(() => parseExpression(Array(300).fill('a').join('*-'))).code).toBe('over-limit');
  });

  it('refuses a min, max or hypot with more arguments than the limit, at the function name', () => {
    const args = (n: number) => Array(n).fill('a').join(',');
    const max = EXPRESSION_LIMITS.arguments;
    expect(solveModel(modelWith(`x = max(${args(max)})`)).values.x!.value).toBeCloseTo(1, 12);
    for (const fn of ['min', 'max', 'hypot']) {
      const e = refusal(() => parseExpression(`1 + ${fn}(${args(max + 1)})`));
      expect(e).toMatchObject({ code: 'over-limit', at: 4 });
      expect(e.message).toBe(`${fn} takes at most 250 arguments; this call has 251`);
    }
  });

  it('answers the 150,000-argument max of issue 14 with errors, never a thrown one', () => {
    const text = `x = max(${Array.from({ length: 150_000 }, (_, i) => `a${i % 3}`).join(',')})`;
    expect(refusal(() => parseRelation(text))).toMatchObject({ code: 'over-limit', at: 4000 });
    const r = solveModel(modelWith(text));
    expect(r.status).toBe('invalid');
    expect(r.errors).toEqual([
      expect.objectContaining({
        code: 'schema',
        message: expect.stringMatching(
          /a relation has at most 4,000 characters; this one has 450,008/,
        ),
      }),
    ]);
  });

  it('keeps no refused over-long text in the parse cache', () => {
    const text = `x = ${sum(2000)}`;
    const first = refusal(() => parseRelation(text));
    // A cached refusal is the same object; an over-long one is made anew each time.
    expect(refusal(() => parseRelation(text))).not.toBe(first);
    const deep = `x = ${sum(300)}`;
    const cached = refusal(() => parseRelation(deep));
    expect(refusal(() => parseRelation(deep))).toBe(cached);
  });

  it('keeps the parse cache to a bounded number of characters, dropping the oldest first', () => {
    const short = parseRelation('cache_probe = a + b');
    // 600 relations of 3,800 characters each: 2.3 million, over the cache's two million.
    const name = 'n'.repeat(15);
    const long = (i: number) => `x${i} = ${Array(199).fill(`${name}1`).join(' + ')}`;
    for (let i = 0; i < 600; i++) parseRelation(long(i));
    expect(parseRelation(long(599))).toBe(parseRelation(long(599)));
    expect(parseRelation('cache_probe = a + b')).not.toBe(short);
  });

  it('refuses an over-long feature position beside the feature, and still evaluates the others', () => {
    const r = evaluateFeatures({
      ...modelWith('x = a + b'),
      parts: [{ id: 'plate', name: 'Plate' }],
      features: [
        // Inside the schema's character limit, past the depth limit.
        { id: 'ok', part: 'plate', kind: 'hole', x: 'a', y: 'b' },
        { id: 'deep', part: 'plate', kind: 'hole', x: sum(300), y: 'b' },
      ],
    });
    expect(r.features.find((f) => f.id === 'ok')?.rows[0]!.x.value).toBeCloseTo(1, 12);
    expect(r.features.find((f) => f.id === 'deep')?.errors).toEqual([
      expect.objectContaining({
        code: 'expression',
        message: expect.stringMatching(/^x: more than 200/),
      }),
    ]);
  });
});

describe('model limits', () => {
  const base = modelWith('x = a + b');
  const issuesOf = (input: unknown) => {
    const r = modelSchema.safeParse(input);
    expect(r.success).toBe(false);
    return r.error!.issues;
  };

  it('refuses more dimensions than the limit, naming it, even when items have issues of their own', () => {
    const dims = Array.from({ length: MODEL_LIMITS.dimensions + 1 }, (_, i) => stated(`d${i}`));
    const issues = issuesOf({ ...base, dimensions: [...dims, { name: '1bad', kind: 'derived' }] });
    expect(issues).toContainEqual(
      expect.objectContaining({
        path: ['dimensions'],
        params: { limit: 'dimensions', kind: 'size' },
        message: 'a model has at most 10,000 dimensions; this one has 10,002',
      }),
    );
  });

  it('refuses more relations, parts and features than their limits', () => {
    const many = <T>(n: number, f: (i: number) => T) => Array.from({ length: n }, (_, i) => f(i));
    const cases: Array<[string, unknown[]]> = [
      ['relations', many(MODEL_LIMITS.relations + 1, (i) => ({ id: `r${i}`, expr: 'x = a' }))],
      ['parts', many(MODEL_LIMITS.parts + 1, (i) => ({ id: `p${i}`, name: 'P' }))],
      [
        'features',
        many(MODEL_LIMITS.features + 1, (i) => ({
          id: `f${i}`,
          part: 'p',
          kind: 'hole',
          x: 0,
          y: 0,
        })),
      ],
    ];
    for (const [field, list] of cases) {
      expect(issuesOf({ ...base, [field]: list })).toContainEqual(
        expect.objectContaining({ path: [field], params: { limit: field, kind: 'size' } }),
      );
    }
  });

  it('counts each hole of a pattern against the hole limit', () => {
    // 41 rows of 500 holes: 20,500 holes in 41 features.
    const features = Array.from({ length: 41 }, (_, i) => ({
      id: `row${i}`,
      part: 'p',
      kind: 'hole' as const,
      x: 0,
      y: i,
      pattern: { type: 'row' as const, count: 500, pitch: 1 },
    }));
    expect(issuesOf({ ...base, features })).toContainEqual(
      expect.objectContaining({
        params: { limit: 'holes', kind: 'size' },
        message:
          'a model has at most 20,000 holes, each hole of a pattern counted; this one has 20,500',
      }),
    );
    expect(modelSchema.safeParse({ ...base, features: features.slice(0, 40) }).success).toBe(true);
  });

  it('refuses a relation or a position over its character limit', () => {
    const long = 'a'.repeat(MODEL_LIMITS.relationCharacters);
    expect(issuesOf({ ...base, relations: [{ id: 'r', expr: `x=${long}` }] })).toContainEqual(
      expect.objectContaining({
        path: ['relations', 0, 'expr'],
        params: { limit: 'relationCharacters', kind: 'size' },
        message: 'a relation has at most 4,000 characters; this one has 4,002',
      }),
    );
    const feature = { id: 'f', part: 'p', kind: 'hole', x: 'a'.repeat(2001), y: 0 };
    expect(issuesOf({ ...base, features: [feature] })).toContainEqual(
      expect.objectContaining({
        path: ['features', 0, 'x'],
        params: { limit: 'expressionCharacters', kind: 'size' },
      }),
    );
  });

  it('evaluates the features of a model at its dimension limit (their hidden positions do not count)', () => {
    const dims = Array.from({ length: MODEL_LIMITS.dimensions }, (_, i) => stated(`d${i}`, i));
    const r = evaluateFeatures({
      ...base,
      dimensions: dims,
      relations: [],
      parts: [{ id: 'plate', name: 'Plate' }],
      features: [{ id: 'f', part: 'plate', kind: 'hole', x: 'd7', y: 'd9 / 3' }],
    });
    expect(r.status).not.toBe('invalid');
    expect(r.features[0]!.rows[0]!.x.value).toBeCloseTo(7, 12);
    expect(r.features[0]!.rows[0]!.y.value).toBeCloseTo(3, 12);
  });

  it('solveModel reports a model over a limit as a schema error, never throwing', () => {
    const dims = Array.from({ length: MODEL_LIMITS.dimensions + 1 }, (_, i) => stated(`d${i}`));
    const r = solveModel({ ...base, dimensions: dims });
    expect(r.status).toBe('invalid');
    expect(r.errors[0]).toMatchObject({ code: 'schema' });
    expect(r.errors[0]!.message).toMatch(/at most 10,000 dimensions/);
  });

  it('bounds a server Monte Carlo by samples × dimensions', () => {
    const dims = Array.from({ length: 800 }, (_, i) => stated(`d${i}`));
    const body = { model: { ...base, dimensions: dims }, monteCarlo: { samples: 20_000 } };
    const r = solveBody.safeParse(body);
    expect(r.success).toBe(false);
    expect(r.error!.issues).toEqual([
      expect.objectContaining({
        path: ['monteCarlo', 'samples'],
        params: { limit: 'monteCarloWork', kind: 'work' },
        message:
          'a Monte Carlo on the server runs at most 2,000,000 samples × dimensions; 20,000 samples of 800 dimensions are 16,000,000',
      }),
    ]);
    expect(solveBody.safeParse({ ...body, monteCarlo: { samples: 2500 } }).success).toBe(true);
  });

  it('keeps the demo model inside every limit, with room for a full Monte Carlo', () => {
    const m = modelSchema.parse(kestrelModel);
    expect(m.dimensions.length * 20_000).toBeLessThanOrEqual(MODEL_LIMITS.monteCarloWork);
    expect(
      solveBody.safeParse({ model: kestrelModel, monteCarlo: { samples: 20_000 } }).success,
    ).toBe(true);
  });
});
