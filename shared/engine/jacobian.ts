/**
 * Linearisation of a block of relations at a point: the Jacobian with respect to the block's
 * own unknowns (for Newton steps) and the partial derivatives with respect to everything else
 * (for implicit differentiation in the stack-up).
 */
import type { CompiledRelation } from './expression';
import type { SparseRow } from './numeric';

export interface BlockLinearisation {
  /** Residuals lhs − rhs. */
  F: Float64Array;
  /** ∂F/∂(block unknowns): one sparse row per relation, columns by block position. */
  rows: SparseRow[];
  /** ∂F/∂(other dimensions): global index and value, per relation. */
  outer: Array<{ idx: number[]; val: number[] }>;
}

/**
 * Evaluates residuals and derivatives of `relations` at x. `colOf[globalIndex]` is the
 * unknown's column in the block, or −1 for a dimension outside it.
 *
 * @example linearizeBlock([rel], colOf, x).rows[0] // { cols: [0], vals: [1] }
 */
export function linearizeBlock(
  relations: readonly CompiledRelation[],
  colOf: Int32Array,
  x: Float64Array,
  withOuter = false,
): BlockLinearisation {
  const n = relations.length;
  const F = new Float64Array(n);
  const rows: SparseRow[] = [];
  const outer: Array<{ idx: number[]; val: number[] }> = [];
  for (let i = 0; i < n; i++) {
    const rel = relations[i]!;
    const k = rel.vars.length;
    const g = new Float64Array(k);
    F[i] = rel.gradient(x, g);
    const cols: number[] = [];
    const vals: number[] = [];
    const oi: number[] = [];
    const ov: number[] = [];
    for (let j = 0; j < k; j++) {
      const gi = rel.vars[j]!;
      const c = colOf[gi]!;
      if (c >= 0) {
        cols.push(c);
        vals.push(g[j]!);
      } else if (withOuter && g[j] !== 0) {
        oi.push(gi);
        ov.push(g[j]!);
      }
    }
    rows.push({ cols, vals });
    outer.push({ idx: oi, val: ov });
  }
  return { F, rows, outer };
}
