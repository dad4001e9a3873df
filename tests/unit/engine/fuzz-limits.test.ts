// Expressions of random depth and width, 10,000 cases: deep parentheses, long sums, wide
// min/max/hypot, unary minus chains, powers, nested calls and huge numbers, layered inside one
// another. Reading one throws nothing but ExpressionError; the calls a server solve thread makes
// (solveModel and evaluateFeatures, then JSON.stringify of the result: server/solve/worker.ts)
// never throw, and a relation past a limit is reported as 'over-limit' or, past the schema's
// character limit, as a schema error naming it. fast-check draws a new seed every run and prints
// it with the shrunk counterexample on failure; pass that `seed` and `path` to fc.assert to
// replay it.
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import {
  EXPRESSION_LIMITS,
  ExpressionError,
  MODEL_LIMITS,
  evaluateFeatures,
  parseExpression,
  parseRelation,
  solveModel,
  type SolveErrorCode,
} from '@shared/engine';
import { expression } from '../../helpers/expressions';

const runs = { numRuns: 10_000 };
const timeout = 300_000;

// shared/engine/result.ts SolveErrorCode, listed by hand so a new code is a conscious change.
const engineCodes: SolveErrorCode[] = [
  'schema',
  'duplicate-name',
  'reserved-name',
  'bad-value',
  'syntax',
  'forbidden',
  'unknown-name',
  'unit-mismatch',
  'division-by-zero',
  'over-limit',
  'not-finite',
  'singular',
  'no-convergence',
];

function base(relations: Array<{ id: string; expr: string }>, features: unknown[] = []) {
  return {
    format: 'fairsheet.model',
    version: 1,
    units: 'mm',
    dimensions: [
      { name: 'a', kind: 'stated', value: 3, tol: 0.01 },
      { name: 'b', kind: 'stated', value: 4, tol: 0.01 },
      { name: 'c', kind: 'assumed', value: 0.5 },
      { name: 'frame.w', kind: 'stated', value: 12, tol: 0.1 },
      { name: 'x', kind: 'derived' },
    ],
    relations,
    parts: [{ id: 'plate', name: 'Plate' }],
    features,
  };
}

/** Whatever reading the text does, it is a tree or an ExpressionError, never another throw. */
function readOrRefuse(read: () => unknown, length: number): ExpressionError | null {
  try {
    read();
    return null;
  } catch (e) {
    if (!(e instanceof ExpressionError)) throw e;
    expect(Number.isInteger(e.at ?? 0) && (e.at ?? 0) >= 0 && (e.at ?? 0) <= length).toBe(true);
    expect(e.message.length).toBeGreaterThan(0);
    return e;
  }
}

describe('expressions of any depth and width', () => {
  it(
    'are read or refused with an ExpressionError; a server solve reports them and never throws',
    () => {
      fc.assert(
        fc.property(expression, fc.boolean(), (expr, leftSide) => {
          const text = leftSide ? `${expr} = x` : `x = ${expr}`;
          const refused = readOrRefuse(() => parseRelation(text), text.length);
          const exprRefused = readOrRefuse(() => parseExpression(expr), expr.length);
          if (exprRefused?.code === 'over-limit' && expr.length <= EXPRESSION_LIMITS.characters) {
            expect(refused?.code).toBe('over-limit');
          }

          const result = solveModel(base([{ id: 'r', expr: text }]), { timeLimitMs: 2000 });
          JSON.stringify(result);
          for (const e of result.errors) expect(engineCodes).toContain(e.code);
          if (text.length > MODEL_LIMITS.relationCharacters) {
            expect(result.errors).toContainEqual(
              expect.objectContaining({
                code: 'schema',
                message: expect.stringMatching(/a relation has at most 4,000 characters/),
              }),
            );
          } else if (refused?.code === 'over-limit') {
            expect(result.errors).toContainEqual(
              expect.objectContaining({ code: 'over-limit', relation: 'r', at: refused.at }),
            );
          }

          const hole = { id: 'f', part: 'plate', kind: 'hole', x: expr, y: 'b' };
          const features = evaluateFeatures(base([], [hole]), { timeLimitMs: 2000 });
          JSON.stringify(features);
          if (expr.trim().length > MODEL_LIMITS.expressionCharacters) {
            expect(features.status).toBe('invalid');
            expect(features.issues[0]!.message).toMatch(/at most 2,000 characters/);
          } else if (exprRefused?.code === 'over-limit') {
            expect(features.features[0]!.errors).toContainEqual(
              expect.objectContaining({ code: 'expression', field: 'x' }),
            );
          }
        }),
        runs,
      );
    },
    timeout,
  );
});
