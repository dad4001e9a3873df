/**
 * Reconciling redundant relations: does the drawing agree with itself, and if not, which
 * given value is most likely wrong?
 *
 * A redundant relation r (one the structure did not need to fix any unknown) is evaluated at
 * the solution. Its residual is compared with what the tolerances of its given inputs allow in
 * the worst case: Σ|∂r/∂gᵢ|·tᵢ, with ∂r/∂gᵢ the total derivative through the solved values.
 * Beyond that (plus the engine's rounding slack) it is a contradiction.
 *
 * Suspects come from a tolerance-weighted least-squares view of all redundant relations that
 * share given values (Baarda's data snooping): with residual vector r, design A = ∂r/∂g and
 * weights from the tolerances, Q = A·diag(t²)·Aᵀ. For each candidate g, the single-value
 * correction that best removes the misfit is ∇g = −(aᵀQ⁻¹r)/(aᵀQ⁻¹a) (a = column of A), and
 * the fraction of the misfit rᵀQ⁻¹r it removes is (aᵀQ⁻¹r)²/((aᵀQ⁻¹a)(rᵀQ⁻¹r)), our score.
 * A value used by several failing relations but not by the agreeing ones scores highest. When
 * scores tie (a single redundant relation cannot tell its inputs apart), the value whose
 * correction is the smallest multiple of its own tolerance comes first. An as-built value is
 * a measurement of the real part: it is weighed but never a suspect.
 */
import { factorDense, nearlyEqual, TOLERANCES } from './numeric';
import type { Check, Contradiction, Suspect } from './result';

export interface RedundantRelation {
  id: string;
  /** It and the relations that produced the values it uses. */
  relations: string[];
  residual: number;
  /** Magnitude of the relation's terms, for the rounding slack. */
  scale: number;
  /** Total derivative of the residual by given value index. */
  gradient: Map<number, number>;
}

export interface ReconcileInput {
  redundant: readonly RedundantRelation[];
  /** Half-band tolerance by dimension index. */
  halfBand: ArrayLike<number>;
  /** Centre shift of unequal tolerances by dimension index. */
  shift: ArrayLike<number>;
  names: readonly string[];
  /** True for values that may not be suspects (as-built). */
  protectedValue: (index: number) => boolean;
}

/**
 * Sorts redundant relations into agreeing checks and contradictions with ranked suspects.
 *
 * @example
 * // overall = a + b, all given: residual 0.02 against ±0.01 allowed → one contradiction
 * reconcileRedundant({ redundant, halfBand, shift, names, protectedValue: () => false })
 */
export function reconcileRedundant(input: ReconcileInput): {
  contradictions: Contradiction[];
  checks: Check[];
} {
  const { redundant, halfBand, shift } = input;
  const checks: Check[] = [];
  const failing: number[] = [];
  const centred: number[] = [];
  const allowedOf: number[] = [];
  redundant.forEach((rr, i) => {
    let allowed = 0;
    let c = rr.residual;
    for (const [g, a] of rr.gradient) {
      allowed += Math.abs(a) * halfBand[g]!;
      c += a * shift[g]!;
    }
    centred.push(c);
    allowedOf.push(allowed);
    const over = Math.abs(c) > allowed && !nearlyEqual(Math.abs(c), allowed, rr.scale + allowed);
    if (over) failing.push(i);
    else checks.push({ relation: rr.id, relations: rr.relations, residual: rr.residual, allowed });
  });
  if (failing.length === 0) return { contradictions: [], checks };

  // Group redundant relations that share a given value (union-find over relations).
  const parent = redundant.map((_, i) => i);
  const find = (a: number): number => {
    while (parent[a] !== a) {
      parent[a] = parent[parent[a]!]!;
      a = parent[a]!;
    }
    return a;
  };
  const owner = new Map<number, number>();
  redundant.forEach((rr, i) => {
    for (const g of rr.gradient.keys()) {
      const o = owner.get(g);
      if (o === undefined) owner.set(g, i);
      else parent[find(i)] = find(o);
    }
  });
  const groupOf = new Map<number, number[]>();
  redundant.forEach((_, i) => {
    const root = find(i);
    const list = groupOf.get(root) ?? [];
    list.push(i);
    groupOf.set(root, list);
  });

  const contradictions: Contradiction[] = [];
  const suspectsCache = new Map<number, Map<number, Suspect>>();
  for (const i of failing) {
    const root = find(i);
    let table = suspectsCache.get(root);
    if (!table) {
      table = rankSuspects(groupOf.get(root)!, input, centred);
      suspectsCache.set(root, table);
    }
    const rr = redundant[i]!; // failing holds indexes into redundant
    const suspects = [...rr.gradient.keys()]
      .filter((g) => table.has(g))
      .map((g) => table.get(g)!)
      .sort(
        (p, q) =>
          (nearlyEqual(p.score, q.score, 1) ? 0 : q.score - p.score) ||
          (p.normalised ?? Infinity) - (q.normalised ?? Infinity) ||
          (p.name < q.name ? -1 : p.name > q.name ? 1 : 0),
      );
    contradictions.push({
      relation: rr.id,
      relations: rr.relations,
      residual: rr.residual,
      allowed: allowedOf[i]!,
      suspects,
    });
  }
  return { contradictions, checks };
}

/** Data-snooping scores for every unprotected given value in one group of redundant relations. */
function rankSuspects(
  members: number[],
  input: ReconcileInput,
  centred: number[],
): Map<number, Suspect> {
  const { redundant, halfBand, names, protectedValue } = input;
  const k = members.length;
  const cols = new Map<number, Float64Array>();
  members.forEach((m, row) => {
    for (const [g, a] of redundant[m]!.gradient) {
      let col = cols.get(g);
      if (!col) {
        col = new Float64Array(k);
        cols.set(g, col);
      }
      col[row] = a;
    }
  });
  const r = Float64Array.from(members, (m) => centred[m]!);
  const Q = new Float64Array(k * k);
  for (const [g, col] of cols) {
    const t2 = halfBand[g]! * halfBand[g]!;
    if (t2 === 0) continue;
    for (let i = 0; i < k; i++) {
      if (col[i] === 0) continue;
      for (let j = 0; j < k; j++) Q[i * k + j]! += col[i]! * col[j]! * t2;
    }
  }
  // Exact inputs give no weights: fall back to unit weights; a rank-deficient Q gets a ridge.
  let trace = 0;
  for (let i = 0; i < k; i++) trace += Q[i * k + i]!;
  if (trace === 0) for (let i = 0; i < k; i++) Q[i * k + i] = 1;
  let factor = factorDense(k, Q);
  if (!factor) {
    for (let i = 0; i < k; i++) Q[i * k + i]! += TOLERANCES.ridge * (trace || 1);
    factor = factorDense(k, Q);
  }
  const out = new Map<number, Suspect>();
  if (!factor) return out;
  const Qr = factor.solve(r);
  let chi2 = 0;
  for (let i = 0; i < k; i++) chi2 += r[i]! * Qr[i]!;
  for (const [g, col] of cols) {
    if (protectedValue(g)) continue;
    const Qa = factor.solve(col);
    let num = 0;
    let den = 0;
    for (let i = 0; i < k; i++) {
      num += col[i]! * Qr[i]!;
      den += col[i]! * Qa[i]!;
    }
    if (!(den > 0)) continue;
    const correction = -num / den;
    const score = chi2 > 0 ? Math.min(1, (num * num) / (den * chi2)) : 0;
    const t = halfBand[g]!;
    out.set(g, {
      name: names[g]!,
      score,
      correction,
      normalised: t > 0 ? Math.abs(correction) / t : null,
    });
  }
  return out;
}
