import { z } from 'zod';
import type { Assert, Same } from './agree';
import type {
  Contradiction,
  SolveError,
  MonteCarloResult,
  OpenGroup,
  SolveResult,
  Check as SolveCheck,
  ValueResult,
} from '../engine';

/**
 * The solve result as the API answers it (POST /api/solve, a save's answer, the stored model's
 * verdict). The engine states the same format as interfaces (`shared/engine/result.ts`); the
 * assertions at the end of this file fail the type check when the two say different things.
 */

const solveStatus = z.enum(['invalid', 'contradictory', 'incomplete', 'solved']);

const contributor = z.object({ name: z.string(), sensitivity: z.number(), share: z.number() });

const valueTrace = z.object({
  relations: z.array(z.object({ id: z.string(), expr: z.string() })),
  inputs: z.array(z.object({ name: z.string(), value: z.number() })),
});

export const valueResult = z.object({
  value: z.number().nullable(),
  worstCase: z.number().nullable(),
  rss: z.number().nullable(),
  kind: z.enum(['stated', 'scaled', 'assumed', 'asbuilt', 'derived']),
  quantity: z.enum(['length', 'angle', 'count']),
  from: z.array(z.string()),
  contributors: z.array(contributor),
  trace: valueTrace,
  tolPlus: z.number().optional(),
  tolMinus: z.number().optional(),
  mean: z.number().optional(),
});

/** A value as a save answers it: its stack-up without the traces and contributors. */
export const slimValueResult = valueResult.omit({ from: true, contributors: true, trace: true });

const suspect = z.object({
  name: z.string(),
  score: z.number(),
  correction: z.number(),
  normalised: z.number().nullable(),
});

const contradiction = z.object({
  relation: z.string(),
  relations: z.array(z.string()),
  residual: z.number(),
  allowed: z.number(),
  suspects: z.array(suspect),
});

const solveCheck = z.object({
  relation: z.string(),
  relations: z.array(z.string()),
  residual: z.number(),
  allowed: z.number(),
});

const openGroup = z.object({
  unknowns: z.array(z.string()),
  needs: z.number(),
  measure: z.array(z.string()),
  relations: z.array(z.string()),
});

const solveError = z.object({
  code: z.enum([
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
  ]),
  message: z.string(),
  relation: z.string().optional(),
  dimension: z.string().optional(),
  at: z.number().optional(),
  residual: z.number().optional(),
  timeLimitMs: z.number().optional(),
});

const monteCarloValue = z.object({
  mean: z.number(),
  sigma: z.number(),
  min: z.number(),
  max: z.number(),
  histogram: z.object({ edges: z.array(z.number()), counts: z.array(z.number()) }),
});

const monteCarloResult = z.object({
  samples: z.number(),
  seed: z.number(),
  failed: z.number(),
  values: z.record(z.string(), monteCarloValue),
});

/** The whole result of a solve (POST /api/solve). */
export const solveResult = z.object({
  status: solveStatus,
  units: z.enum(['in', 'mm']).nullable(),
  values: z.record(z.string(), valueResult),
  contradictions: z.array(contradiction),
  checks: z.array(solveCheck),
  undetermined: z.array(z.string()),
  needs: z.number(),
  openGroups: z.array(openGroup),
  errors: z.array(solveError),
  monteCarlo: monteCarloResult.optional(),
});

/** The server's verdict on a model (status, contradictions, checks, needs), no values. */
export const solveVerdict = solveResult.omit({ values: true });
export type SolveVerdict = z.infer<typeof solveVerdict>;

/** A save's solve: each value with its stack-up, without traces. */
export const slimSolveResult = solveResult.extend({
  values: z.record(z.string(), slimValueResult),
});
export type SlimSolveResult = z.infer<typeof slimSolveResult>;

// The engine's own types and these schemas say the same (see agree.ts).
type _Agree = [
  Assert<Same<z.infer<typeof solveResult>, SolveResult>>,
  Assert<Same<z.infer<typeof valueResult>, ValueResult>>,
  Assert<Same<z.infer<typeof contradiction>, Contradiction>>,
  Assert<Same<z.infer<typeof solveCheck>, SolveCheck>>,
  Assert<Same<z.infer<typeof openGroup>, OpenGroup>>,
  Assert<Same<z.infer<typeof solveError>, SolveError>>,
  Assert<Same<z.infer<typeof monteCarloResult>, MonteCarloResult>>,
];
