/**
 * Numeric helpers for the engine: the one tolerance rule (`nearlyEqual`) and the small linear
 * algebra the solver needs (dense LU for small blocks, sparse LU for large ones). Pure, no I/O.
 */

/**
 * The engine's one floating-point tolerance. Relative 1e-9 is far below any workshop
 * tolerance (a micrometre on a metre) yet far above the rounding noise of a few hundred
 * operations; the absolute floor keeps comparisons with zero meaningful.
 */
export const NUMERIC_TOLERANCE = { relative: 1e-9, absolute: 1e-12 } as const;

/**
 * Every other small number the engine judges by, named with why it has that size. Lengths are
 * in the model unit unless the name says otherwise; ratios are of the quantity named.
 */
export const TOLERANCES = Object.freeze({
  /**
   * LU pivots at or below this fraction of the matrix's largest entry count as zero: the
   * matrix is singular. Double precision keeps about 16 digits; a pivot 12 orders down has
   * lost all but four of them.
   */
  singularPivot: 1e-12,
  /**
   * The same cut for normal equations AᵀA·h = Aᵀb (calibration by more than four points):
   * forming AᵀA squares the condition number, so a pivot is judged two orders less strictly.
   */
  normalEquationsPivot: 1e-10,
  /**
   * Powers of length and angle in a unit check: they are small integers and halves (a square
   * root), so any difference at all beyond rounding is a different unit.
   */
  unitPower: 1e-12,
  /**
   * Positions within a millionth of the model unit (a nanometre, or a millionth of an inch)
   * are the same line of a readout's table: far below what a readout shows (0.001 mm,
   * 0.0001 in) and far above the rounding of a solved position.
   */
  sameLine: 1e-6,
  /**
   * A stock drill, or a thread's size in inches, within a millionth of the wanted size is that
   * size: table values are written to at most four places, so binary rounding (5.1 mm is not
   * 5.1 exactly) never reaches this.
   */
  sameTableSize: 1e-6,
  /**
   * Sizes computed from a written fraction or pitch (7/64 in, 0.35 mm) against the table's own
   * value of the same size: both are one or two roundings from the same decimal.
   */
  sameComputedSize: 1e-9,
  /**
   * Two calibration references run the same way when the cross product of their directions is
   * below this fraction of the product of their lengths (squared): the engine's relative
   * tolerance, directions a few hundred-thousandths of a radian apart.
   */
  parallelReferences: 1e-9,
  /**
   * In normalised coordinates (mean distance √2 from the centroid), three control points
   * spanning a triangle smaller than this are in one line: they cannot fix a perspective.
   */
  collinearArea: 1e-6,
  /**
   * A point whose homogeneous w is below this fraction of its terms maps to the horizon line:
   * the perspective sends it to infinity.
   */
  horizonW: 1e-12,
  /**
   * Central differences of a measurement by a calibration input move that input by this
   * fraction of its own ± (small enough for the first-order slope, large enough to stay well
   * above rounding).
   */
  finiteDifferenceStep: 1e-3,
  /**
   * A rank-deficient weight matrix of suspects is made solvable by adding this fraction of its
   * trace to its diagonal: a ridge too small to move any well-determined correction.
   */
  ridge: 1e-9,
  /**
   * A solved value has moved between two solves when it differs by more than this (model
   * unit): a billionth of an inch, far below any place shown, above the noise of a re-solve.
   */
  moved: 1e-9,
  /** Newton with a singular Jacobian nudges each unknown by this fraction of (|value| + 1). */
  newtonNudge: 1e-3,
  /** Damped Newton halves its step down to this fraction of the full step, then gives up. */
  newtonMinStep: 1e-8,
  /**
   * A damped step is taken when the residual norm falls by at least this fraction of the step
   * length (the Armijo condition, in its usual size).
   */
  newtonSufficientDecrease: 1e-4,
});

/**
 * Whether two numbers agree within the engine's tolerance. `scale` is the magnitude the
 * difference is judged against (defaults to the larger of |a| and |b|), so a residual that is
 * the small difference of large terms can be judged against those terms.
 *
 * @example nearlyEqual(0.1 + 0.2, 0.3) // true
 * @example nearlyEqual(residual, 0, sumOfAbsTerms)
 */
export function nearlyEqual(a: number, b: number, scale?: number): boolean {
  if (a === b) return true;
  if (!Number.isFinite(a) || !Number.isFinite(b)) return false;
  const s = scale ?? Math.max(Math.abs(a), Math.abs(b));
  return Math.abs(a - b) <= NUMERIC_TOLERANCE.relative * s + NUMERIC_TOLERANCE.absolute;
}

/** A factorised square matrix that can solve for any right-hand side. */
export interface LinearFactor {
  readonly n: number;
  /** Solves A·x = b; returns a new array (b is not changed). */
  solve(b: ArrayLike<number>): Float64Array;
}

/** Pivots below this fraction of the largest entry count as zero: the matrix is singular. */
const SINGULAR_RATIO: number = TOLERANCES.singularPivot;

/**
 * LU factorisation with partial pivoting of a dense n×n matrix (row-major). Returns null when
 * the matrix is singular to working precision: a pivot no larger than `singularRatio` times the
 * largest entry.
 *
 * @example factorDense(2, [2, 1, 1, 3])!.solve([3, 5]) // Float64Array [0.8, 1.4]
 */
export function factorDense(
  n: number,
  matrix: ArrayLike<number>,
  singularRatio = SINGULAR_RATIO,
): LinearFactor | null {
  const a = Float64Array.from(matrix as ArrayLike<number>);
  const piv = new Int32Array(n);
  let maxAbs = 0;
  for (let i = 0; i < n * n; i++) maxAbs = Math.max(maxAbs, Math.abs(a[i]!));
  if (maxAbs === 0 || !Number.isFinite(maxAbs)) return null;
  const tiny = maxAbs * singularRatio;
  for (let k = 0; k < n; k++) {
    let p = k;
    let best = Math.abs(a[k * n + k]!);
    for (let i = k + 1; i < n; i++) {
      const v = Math.abs(a[i * n + k]!);
      if (v > best) {
        best = v;
        p = i;
      }
    }
    if (best <= tiny) return null;
    piv[k] = p;
    if (p !== k) {
      for (let j = 0; j < n; j++) {
        const t = a[k * n + j]!;
        a[k * n + j] = a[p * n + j]!;
        a[p * n + j] = t;
      }
    }
    const pivot = a[k * n + k]!;
    for (let i = k + 1; i < n; i++) {
      const f = a[i * n + k]! / pivot;
      if (f === 0) continue;
      a[i * n + k] = f;
      for (let j = k + 1; j < n; j++) a[i * n + j]! -= f * a[k * n + j]!;
    }
  }
  return {
    n,
    solve(b) {
      const x = Float64Array.from(b as ArrayLike<number>);
      // The factorisation swapped whole rows, multipliers already stored in them included, so
      // the factors are those of P·A = L·U with P the product of every swap in order: apply
      // the whole permutation to b first, then substitute forward through L. (Applying each
      // swap between elimination steps, as an elimination that swaps only the active columns
      // would, reads multipliers that later swaps have moved.)
      for (let k = 0; k < n; k++) {
        const p = piv[k]!;
        if (p !== k) {
          const t = x[k]!;
          x[k] = x[p]!;
          x[p] = t;
        }
      }
      for (let k = 0; k < n; k++) {
        const xk = x[k]!;
        if (xk !== 0) for (let i = k + 1; i < n; i++) x[i]! -= a[i * n + k]! * xk;
      }
      for (let i = n - 1; i >= 0; i--) {
        let s = x[i]!;
        for (let j = i + 1; j < n; j++) s -= a[i * n + j]! * x[j]!;
        x[i] = s / a[i * n + i]!;
      }
      return x;
    },
  };
}

/** One row of a sparse matrix: column indices and their values. */
export interface SparseRow {
  cols: ArrayLike<number>;
  vals: ArrayLike<number>;
}

/**
 * Sparse LU (Gaussian elimination on rows) for an n×n matrix given as rows. Columns are
 * eliminated in their natural order; the pivot row is chosen by threshold partial pivoting
 * (any candidate within 10 % of the largest magnitude, preferring the sparsest row), which
 * keeps fill-in small for the banded and block-structured systems drawings produce while
 * staying numerically safe. Returns null when singular.
 *
 * @example factorSparse(2, [{ cols: [0, 1], vals: [2, 1] }, { cols: [0, 1], vals: [1, 3] }])!.solve([3, 5])
 */
export function factorSparse(n: number, rows: readonly SparseRow[]): LinearFactor | null {
  // Rows as growable (cols, vals) arrays; colRows[c] lists the rows that ever held column c.
  // A stamped position table finds an entry of the row being updated without any Map.
  const rc: number[][] = [];
  const rv: number[][] = [];
  const colRows: number[][] = Array.from({ length: n }, () => []);
  const pos = new Int32Array(n);
  const stamp = new Int32Array(n);
  let tick = 0;
  let maxAbs = 0;
  for (let i = 0; i < n; i++) {
    tick++;
    const cols: number[] = [];
    const vals: number[] = [];
    const r = rows[i]!;
    for (let t = 0; t < r.cols.length; t++) {
      const v = r.vals[t]!;
      if (v === 0) continue;
      const c = r.cols[t]!;
      if (stamp[c] === tick) vals[pos[c]!]! += v;
      else {
        stamp[c] = tick;
        pos[c] = cols.length;
        cols.push(c);
        vals.push(v);
        colRows[c]!.push(i);
      }
      maxAbs = Math.max(maxAbs, Math.abs(v));
    }
    rc.push(cols);
    rv.push(vals);
  }
  if (maxAbs === 0 || !Number.isFinite(maxAbs)) return null;
  const tiny = maxAbs * SINGULAR_RATIO;
  const done = new Uint8Array(n);
  const valueAt = (i: number, c: number): number => {
    const cols = rc[i]!;
    for (let t = 0; t < cols.length; t++) if (cols[t] === c) return rv[i]![t]!;
    return 0;
  };
  const pivotRow = new Int32Array(n);
  const uDiag = new Float64Array(n);
  const uCols: number[][] = new Array(n);
  const uVals: number[][] = new Array(n);
  const opsRow: number[] = [];
  const opsPivot: number[] = [];
  const opsFactor: number[] = [];
  const cand: number[] = [];
  const candVal: number[] = [];
  for (let c = 0; c < n; c++) {
    cand.length = 0;
    candVal.length = 0;
    let best = 0;
    for (const i of colRows[c]!) {
      if (done[i]) continue;
      const v = valueAt(i, c);
      if (v === 0) continue;
      cand.push(i);
      candVal.push(v);
      best = Math.max(best, Math.abs(v));
    }
    if (best <= tiny) return null;
    let pi = -1;
    for (let t = 0; t < cand.length; t++) {
      if (
        Math.abs(candVal[t]!) >= 0.1 * best &&
        (pi < 0 || rc[cand[t]!]!.length < rc[cand[pi]!]!.length)
      )
        pi = t;
    }
    // best > tiny, so the largest candidate passed the 10 % test: pi is a candidate.
    const p = cand[pi]!;
    const pv = candVal[pi]!;
    done[p] = 1;
    pivotRow[c] = p;
    const pc = rc[p]!;
    const pvals = rv[p]!;
    const ucols: number[] = [];
    const uvals: number[] = [];
    for (let t = 0; t < pc.length; t++) {
      const col = pc[t]!;
      if (col !== c) {
        ucols.push(col);
        uvals.push(pvals[t]!);
      }
    }
    uDiag[c] = pv;
    uCols[c] = ucols;
    uVals[c] = uvals;
    for (let t = 0; t < cand.length; t++) {
      if (t === pi) continue;
      const i = cand[t]!;
      const f = candVal[t]! / pv;
      opsRow.push(i);
      opsPivot.push(p);
      opsFactor.push(f);
      const cols = rc[i]!;
      const vals = rv[i]!;
      tick++;
      for (let q = 0; q < cols.length; q++) {
        stamp[cols[q]!] = tick;
        pos[cols[q]!] = q;
      }
      for (let q = 0; q < ucols.length; q++) {
        const col = ucols[q]!;
        if (stamp[col] === tick) vals[pos[col]!]! -= f * uvals[q]!;
        else {
          stamp[col] = tick;
          pos[col] = cols.length;
          cols.push(col);
          vals.push(-f * uvals[q]!);
          colRows[col]!.push(i);
        }
      }
      // Drop column c from the row (swap with the last entry).
      const at = pos[c]!;
      const last = cols.length - 1;
      cols[at] = cols[last]!;
      vals[at] = vals[last]!;
      cols.pop();
      vals.pop();
    }
  }
  return {
    n,
    solve(b) {
      const y = Float64Array.from(b as ArrayLike<number>);
      for (let t = 0; t < opsRow.length; t++) y[opsRow[t]!]! -= opsFactor[t]! * y[opsPivot[t]!]!;
      const x = new Float64Array(n);
      for (let c = n - 1; c >= 0; c--) {
        let s = y[pivotRow[c]!]!;
        const cols = uCols[c]!;
        const vals = uVals[c]!;
        for (let t = 0; t < cols.length; t++) s -= vals[t]! * x[cols[t]!]!;
        x[c] = s / uDiag[c]!;
      }
      return x;
    },
  };
}

/** Blocks up to this size are factorised densely; larger ones sparsely. */
export const DENSE_LIMIT = 32;

/**
 * Factorises a square matrix given as sparse rows, choosing dense or sparse LU by size.
 *
 * @example factorRows(1, [{ cols: [0], vals: [4] }])!.solve([2]) // Float64Array [0.5]
 */
export function factorRows(n: number, rows: readonly SparseRow[]): LinearFactor | null {
  if (n > DENSE_LIMIT) return factorSparse(n, rows);
  const a = new Float64Array(n * n);
  for (let i = 0; i < n; i++) {
    const r = rows[i]!;
    for (let t = 0; t < r.cols.length; t++) a[i * n + r.cols[t]!]! += r.vals[t]!;
  }
  return factorDense(n, a);
}

/** Largest absolute entry (∞-norm of a vector). */
export function maxAbs(v: ArrayLike<number>): number {
  let m = 0;
  for (let i = 0; i < v.length; i++) {
    const a = Math.abs(v[i]!);
    if (a > m || Number.isNaN(a)) m = a;
  }
  return m;
}
