/**
 * Reconciliation: each redundant relation's residual and total derivative at the solution,
 * handed to `reconcileRedundant` for the checks that close and the contradictions with their
 * ranked suspects.
 */
import { reconcileRedundant, type RedundantRelation } from '../reconcile';
import type { Check, Contradiction, SolveError } from '../result';
import { totalDerivative, type Sensitivity } from '../stackup';
import type { Solution } from './blocks';
import type { GivenBands } from './assembly';
import type { Traces } from './traces';

/**
 * Checks and contradictions of a solution's redundant relations (none for a values-only solve,
 * which has no sensitivities). A relation that gives no finite number is an error, pushed to
 * `errors`.
 *
 * @example reconcileSolution(sol, traces, sens, bands, errors, false).contradictions.length // 1
 */
export function reconcileSolution(
  sol: Solution,
  traces: Traces,
  sens: ReadonlyArray<Sensitivity | undefined>,
  bands: GivenBands,
  errors: SolveError[],
  valuesOnly: boolean,
): { contradictions: Contradiction[]; checks: Check[] } {
  const { prep, structure, x } = sol;
  const dims = prep.dimensions;
  const redundant: RedundantRelation[] = [];
  // The structure's indices count the model's relations.
  for (const r of valuesOnly ? [] : structure.redundant) {
    const pr = prep.relations[r]!;
    const rel = pr.compiled;
    if (rel.vars.some((v) => !Number.isFinite(x[v]))) continue; // an input failed upstream
    const residual = rel.residual(x);
    if (!Number.isFinite(residual)) {
      const d = rel.diagnose(x);
      errors.push({
        code: d?.code === 'division-by-zero' ? 'division-by-zero' : 'not-finite',
        relation: pr.id,
        message: d?.message ?? 'the relation gives no finite number',
        ...(d?.at !== undefined ? { at: d.at } : {}),
      });
      continue;
    }
    const gradient = totalDerivative(rel, x, sens);
    if (!gradient) continue;
    const t = traces.of([rel], [r], -1);
    redundant.push({
      id: pr.id,
      relations: traces.sortRelations(t.rs).map((i) => prep.relations[i]!.id),
      residual,
      scale: rel.scale(x),
      gradient,
    });
  }
  return reconcileRedundant({
    redundant,
    halfBand: bands.halfBand,
    shift: bands.shift,
    names: dims.map((d) => d.name),
    protectedValue: (i) => dims[i]?.kind === 'asbuilt',
  });
}
