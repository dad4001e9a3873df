/**
 * Solving a model: read and check it, find its structure, solve block by block, reconcile the
 * redundant relations and stack up the tolerances.
 *
 * Linear blocks (every relation affine in the block's unknowns) are solved directly with one
 * LU solve. Non-linear blocks use damped Newton: the full step is halved until the residual
 * norm drops, with the forward-mode Jacobian; capped by iterations and a time budget, and a
 * failure names the relations and the residual left. Each derived value keeps its trace.
 *
 * One file a stage, in the order `solvePrepared` runs them:
 *
 *   prepare.ts         the model read: values, tolerances, relations compiled; schema errors
 *   blocks.ts          structure, then each block solved (one LU solve, or damped Newton)
 *   traces.ts          the relations and given inputs behind each derived value
 *   reconciliation.ts  redundant relations: checks and contradictions with their suspects
 *   assembly.ts        values with their stack-ups, what is open, the status
 *   monte-carlo.ts     the seeded Monte Carlo, re-solving only the blocks it needs
 */
import { modelSchema } from '../model';
import type { SolveResult } from '../result';
import { propagateSensitivities, type Sensitivity } from '../stackup';
import { assembleResult, givenBands } from './assembly';
import { solveStructure } from './blocks';
import { monteCarloOf } from './monte-carlo';
import type { SolveOptions } from './options';
import { emptyResult, prepareModel, schemaErrors, type PreparedModel } from './prepare';
import { reconcileSolution } from './reconciliation';
import { Traces } from './traces';

export type { SolveOptions } from './options';
export { prepareModel } from './prepare';
export type { PreparedDimension, PreparedModel, PreparedRelation } from './prepare';

/**
 * Solves a model (format v1): derived values with their stack-up, checks, contradictions with
 * ranked suspects, and what is still missing. Never throws on bad input: problems are in
 * `errors` and the status is `invalid`.
 *
 * @example
 * solveModel({ format: 'fairsheet.model', version: 1, units: 'in',
 *   dimensions: [{ name: 'a', kind: 'stated', value: '1.750', tol: '0.003' },
 *                { name: 'b', kind: 'stated', value: '0.750', tol: '0.001' },
 *                { name: 'w', kind: 'derived' }],
 *   relations: [{ id: 'r1', expr: 'w = a - b' }] }).values.w.value // 1
 */
export function solveModel(input: unknown, options: SolveOptions = {}): SolveResult {
  const parsed = modelSchema.safeParse(input);
  if (!parsed.success) return emptyResult(schemaErrors(parsed.error, input));
  return solvePrepared(prepareModel(parsed.data), options);
}

/**
 * Solves an already prepared model (lets a caller re-solve without re-reading the model).
 *
 * @example solvePrepared(prepareModel(model)).status // 'solved'
 */
export function solvePrepared(prep: PreparedModel, options: SolveOptions = {}): SolveResult {
  const valuesOnly = options.valuesOnly ?? false;
  const sol = solveStructure(prep, options);
  const errors = [...prep.errors, ...sol.errors];
  const bands = givenBands(prep);
  const sens: Array<Sensitivity | undefined> = valuesOnly
    ? new Array(prep.dimensions.length)
    : propagateSensitivities(
        sol.blocks.filter((b) => b.ok),
        sol.x,
        bands.isGiven,
      );
  const traces = new Traces(sol, bands.isGiven, !valuesOnly);
  const reconciled = reconcileSolution(sol, traces, sens, bands, errors, valuesOnly);
  const result = assembleResult(sol, traces, sens, bands, errors, reconciled, valuesOnly);
  if (options.monteCarlo && options.monteCarlo.samples > 0) {
    result.monteCarlo = monteCarloOf(sol, traces.blockOf, options.monteCarlo);
  }
  return result;
}
