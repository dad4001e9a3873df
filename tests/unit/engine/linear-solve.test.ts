/**
 * Every linear solve of the engine against ml-matrix (a general-purpose reference library from
 * the registry): the dense and sparse LU solves, the choice between them, the linear blocks of
 * a model with their stack-up, the covariance solve that ranks suspects, and the calibration's
 * solve. The systems are made to need row swaps after the first elimination step, where a
 * solve that applies the factorisation's permutation wrongly goes astray.
 */
import fc from 'fast-check';
import { LuDecomposition, Matrix, inverse, solve as mlSolve } from 'ml-matrix';
import { describe, expect, it } from 'vitest';
import {
  factorDense,
  factorRows,
  factorSparse,
  applyHomography,
  fitHomography,
  reconcileRedundant,
  solveModel,
  type RedundantRelation,
  type SparseRow,
} from '@shared/engine';

/** Park–Miller generator: a seed from fast-check makes a whole matrix, so a case is replayable. */
function random(seed: number): () => number {
  let s = seed;
  return () => ((s = (s * 48271) % 2147483647) / 2147483647) * 2 - 1;
}

/**
 * A random n×n matrix that partial pivoting must reorder at later steps: small diagonal entries
 * (like `0.001*w + x + y + z`), entries of order one elsewhere, some of them zero when `density`
 * is below 1.
 */
function swapHeavyMatrix(n: number, seed: number, density: number): number[][] {
  const rnd = random(seed);
  return Array.from({ length: n }, (_, i) =>
    Array.from({ length: n }, (_, j) => {
      if (i === j) return rnd() * 1e-3;
      return (rnd() + 1) / 2 < density ? rnd() : 0;
    }),
  );
}

/** The row swaps partial pivoting makes after the first step, counted on ml-matrix's own LU. */
function laterSwaps(a: number[][]): number {
  const lu = new LuDecomposition(new Matrix(a));
  const p = lu.pivotPermutationVector;
  // Undo the swaps in order; each position k whose row is not yet k needed a swap at step k.
  const at = [...p];
  let swaps = 0;
  for (let k = 0; k < at.length; k++) {
    if (at[k] === k) continue;
    const j = at.indexOf(k, k + 1);
    [at[k], at[j]] = [at[j]!, at[k]!];
    if (k > 0) swaps++;
  }
  return swaps;
}

function asRows(a: number[][]): SparseRow[] {
  return a.map((r) => {
    const cols: number[] = [];
    const vals: number[] = [];
    r.forEach((v, j) => {
      if (v !== 0) {
        cols.push(j);
        vals.push(v);
      }
    });
    return { cols, vals };
  });
}

/** ‖x − ref‖∞ judged against the conditioning: a backward-stable solve stays well inside it. */
function expectClose(ours: ArrayLike<number>, ref: number[], cond: number): void {
  const scale = Math.max(1, ...ref.map(Math.abs));
  for (let i = 0; i < ref.length; i++)
    expect(Math.abs(ours[i]! - ref[i]!)).toBeLessThanOrEqual(1e-12 * cond * scale + 1e-12);
}

/** A cheap bound on the condition number: ‖A‖∞·‖A⁻¹‖∞ from ml-matrix's inverse. */
function conditionOf(a: number[][]): number {
  const inv = inverse(new Matrix(a)).to2DArray();
  const norm = (m: number[][]) => Math.max(...m.map((r) => r.reduce((s, v) => s + Math.abs(v), 0)));
  return norm(a) * norm(inv);
}

describe('linear solves against ml-matrix, on systems that need row swaps at later steps', () => {
  it('the dense LU, the sparse LU and the size-based choice solve 10,000 random systems as ml-matrix does', () => {
    let withLaterSwaps = 0;
    let runs = 0;
    fc.assert(
      fc.property(
        fc.integer({ min: 2, max: 40 }),
        fc.integer({ min: 1, max: 2 ** 31 - 2 }),
        fc.constantFrom(1, 0.5, 0.25),
        (n, seed, density) => {
          const a = swapHeavyMatrix(n, seed, density);
          const lu = new LuDecomposition(new Matrix(a));
          // A random sparse pattern can be singular; the reference must have an answer.
          fc.pre(!lu.isSingular());
          const cond = conditionOf(a);
          fc.pre(Number.isFinite(cond) && cond < 1e8);
          runs++;
          if (laterSwaps(a) > 0) withLaterSwaps++;
          const b = Array.from({ length: n }, random(seed ^ 0x5bd1e995));
          const ref = mlSolve(new Matrix(a), Matrix.columnVector(b)).to1DArray();
          const rows = asRows(a);
          expectClose(factorDense(n, a.flat())!.solve(b), ref, cond);
          expectClose(factorSparse(n, rows)!.solve(b), ref, cond);
          expectClose(factorRows(n, rows)!.solve(b), ref, cond);
        },
      ),
      { numRuns: 10_000 },
    );
    // The generator does what it claims: nearly every system needs swaps after the first step.
    expect(withLaterSwaps / runs).toBeGreaterThan(0.9);
  });

  it('a coupled linear block of a model: values and the worst-case and RSS stack-up equal the inverse matrix’s', () => {
    fc.assert(
      fc.property(
        fc.integer({ min: 2, max: 40 }),
        fc.integer({ min: 1, max: 2 ** 31 - 2 }),
        (n, seed) => {
          const rnd = random(seed);
          // Figures to three places, as a drawing gives them; small diagonal, so swaps are needed.
          const a = swapHeavyMatrix(n, seed, 1).map((r) => r.map((v) => Number(v.toFixed(3))));
          a.forEach((r, i) => (r[i] = (i + 1) / 1000));
          const lu = new LuDecomposition(new Matrix(a));
          fc.pre(!lu.isSingular());
          const cond = conditionOf(a);
          fc.pre(cond < 1e6);
          const g = Array.from({ length: n }, () => Number((rnd() * 10).toFixed(3)));
          const tol = Array.from({ length: n }, () =>
            Number((0.001 + Math.abs(rnd()) / 50).toFixed(4)),
          );
          const result = solveModel({
            format: 'fairsheet.model',
            version: 1,
            units: 'mm',
            dimensions: [
              ...g.map((v, i) => ({ name: `g${i}`, kind: 'stated', value: v, tol: tol[i] })),
              ...g.map((_, i) => ({ name: `x${i}`, kind: 'derived' })),
            ],
            relations: a.map((row, i) => ({
              id: `e${i}`,
              expr: `${row.map((v, j) => (v === 0 ? '' : `${v < 0 ? '-' : '+'} ${Math.abs(v)} * x${j}`)).join(' ')} = g${i}`,
            })),
          });
          expect(result.status).toBe('solved');
          const inv = inverse(new Matrix(a));
          const x = inv.mmul(Matrix.columnVector(g)).to1DArray();
          for (let j = 0; j < n; j++) {
            const v = result.values[`x${j}`]!;
            const scale = Math.max(1, Math.abs(x[j]!));
            expect(Math.abs(v.value! - x[j]!)).toBeLessThanOrEqual(1e-12 * cond * scale);
            let worst = 0;
            let sumSq = 0;
            for (let i = 0; i < n; i++) {
              worst += Math.abs(inv.get(j, i)) * tol[i]!;
              sumSq += (inv.get(j, i) * tol[i]!) ** 2;
            }
            const slack = 1e-12 * cond * Math.max(1, worst);
            expect(Math.abs(v.worstCase! - worst)).toBeLessThanOrEqual(slack);
            expect(Math.abs(v.rss! - Math.sqrt(sumSq))).toBeLessThanOrEqual(slack);
          }
        },
      ),
      { numRuns: 400 },
    );
  });

  it('four coupled relations with small diagonals: the stack-up of w, x, y, z equals the inverse matrix’s', () => {
    // 0.001w + x + y + z = a, w + 0.002x + 3y + z = b, 2w + 5x + 0.003y + 2z = c,
    // 3w + x + 7y + 0.004z = d; a, b, c, d = 1, 2, 3, 4, each ±0.01.
    // Check values: numpy 2.4.6 linalg.solve and linalg.inv on this matrix, computed for this
    // test outside the project; worst case Σ|A⁻¹ᵢⱼ|·0.01, RSS √Σ(A⁻¹ᵢⱼ·0.01)².
    const expected = {
      w: { value: 0.55222937, worst: 0.02663155, rss: 0.01660882 },
      x: { value: 0.17184757, worst: 0.01556173, rss: 0.00954154 },
      y: { value: 0.30991337, worst: 0.01072579, rss: 0.00613937 },
      z: { value: 0.51768683, worst: 0.01557558, rss: 0.0102329 },
    };
    const result = solveModel({
      format: 'fairsheet.model',
      version: 1,
      units: 'in',
      dimensions: [
        { name: 'a', kind: 'stated', value: 1, tol: 0.01 },
        { name: 'b', kind: 'stated', value: 2, tol: 0.01 },
        { name: 'c', kind: 'stated', value: 3, tol: 0.01 },
        { name: 'd', kind: 'stated', value: 4, tol: 0.01 },
        { name: 'w', kind: 'derived' },
        { name: 'x', kind: 'derived' },
        { name: 'y', kind: 'derived' },
        { name: 'z', kind: 'derived' },
      ],
      relations: [
        { id: 'r1', expr: '0.001*w + x + y + z = a' },
        { id: 'r2', expr: 'w + 0.002*x + 3*y + z = b' },
        { id: 'r3', expr: '2*w + 5*x + 0.003*y + 2*z = c' },
        { id: 'r4', expr: '3*w + x + 7*y + 0.004*z = d' },
      ],
    });
    expect(result.status).toBe('solved');
    // Values come back in the model's units (inches here).
    for (const [name, e] of Object.entries(expected)) {
      const v = result.values[name]!;
      expect(v.value!).toBeCloseTo(e.value, 7);
      expect(v.worstCase!).toBeCloseTo(e.worst, 7);
      expect(v.rss!).toBeCloseTo(e.rss, 7);
    }
  });
});

describe('the covariance solve that ranks suspects', () => {
  it('scores and corrections of groups of 3 to 10 redundant relations equal those computed with ml-matrix', () => {
    fc.assert(
      fc.property(
        fc.integer({ min: 3, max: 10 }),
        fc.integer({ min: 1, max: 2 ** 31 - 2 }),
        (k, seed) => {
          const rnd = random(seed);
          const m = k + 3;
          // Each relation uses every given value, with small weights on its "own" one, so the
          // covariance matrix Q needs row swaps too.
          const A = Array.from({ length: k }, () => Array.from({ length: m }, () => rnd()));
          const halfBand = Array.from({ length: m }, () => 0.005 + Math.abs(rnd()) / 100);
          const residual = Array.from({ length: k }, () => rnd());
          const redundant: RedundantRelation[] = A.map((row, i) => ({
            id: `r${i}`,
            relations: [`r${i}`],
            residual: residual[i]!,
            scale: 1,
            gradient: new Map(row.map((v, g) => [g, v] as [number, number])),
          }));
          const names = halfBand.map((_, g) => `g${g}`);
          const { contradictions } = reconcileRedundant({
            redundant,
            halfBand,
            shift: new Array<number>(m).fill(0),
            names,
            protectedValue: () => false,
          });
          // Q = A·diag(t²)·Aᵀ; for column a of A: score = (aᵀQ⁻¹r)²/((aᵀQ⁻¹a)(rᵀQ⁻¹r)),
          // correction = −(aᵀQ⁻¹r)/(aᵀQ⁻¹a) (Baarda's data snooping, as reconcile.ts states).
          const Am = new Matrix(A);
          const Q = Am.mmul(Matrix.diag(halfBand.map((t) => t * t))).mmul(Am.transpose());
          fc.pre(!new LuDecomposition(Q).isSingular());
          const Qi = inverse(Q);
          const r = Matrix.columnVector(residual);
          const chi2 = r.transpose().mmul(Qi).mmul(r).get(0, 0);
          for (const c of contradictions) {
            for (const s of c.suspects) {
              const g = Number(s.name.slice(1));
              const a = Am.getColumnVector(g);
              const num = a.transpose().mmul(Qi).mmul(r).get(0, 0);
              const den = a.transpose().mmul(Qi).mmul(a).get(0, 0);
              expect(s.score).toBeCloseTo(Math.min(1, (num * num) / (den * chi2)), 6);
              expect(s.correction).toBeCloseTo(-num / den, 6);
            }
          }
        },
      ),
      { numRuns: 1000 },
    );
  });

  it('a misprinted pitch-circle diameter is the first suspect of every relation it spoils', () => {
    // A flange with six holes on a pitch circle 3.000 in across, the figure misprinted 3 1/8.
    // The other figures agree with 3.000: the hole spacing, chord = D·sin(180°/6) (common
    // practice for equally spaced holes), the holes across, one hole's offsets from the centre
    // (D/2·cos 60°, D/2·sin 60°), the width over the bosses and the flange, each with the
    // tolerance it was printed to. Eight redundant relations share the given values, so the
    // covariance solve is 8×8 and needs row swaps; solved wrongly, the diameter was not even
    // named and each relation blamed its other figure.
    const result = solveModel({
      format: 'fairsheet.model',
      version: 1,
      units: 'in',
      dimensions: [
        { name: 'pcd', kind: 'stated', value: '3 1/8', tol: 0.005 },
        { name: 'chord', kind: 'stated', value: '1.500', tol: 0.0005 },
        { name: 'across', kind: 'stated', value: '3.000', tol: 0.005 },
        { name: 'h1x', kind: 'stated', value: '0.750', tol: 0.005 },
        { name: 'h1y', kind: 'stated', value: '1.299', tol: 0.02 },
        { name: 'boss', kind: 'stated', value: '0.500', tol: 0.005 },
        { name: 'width', kind: 'stated', value: '3.500', tol: 0.0005 },
        { name: 'flange', kind: 'stated', value: '4.000', tol: 0.01 },
      ],
      relations: [
        { id: 'c1', expr: 'chord = pcd * sin(30 deg)' },
        { id: 'd1', expr: 'across = pcd' },
        { id: 'h1', expr: 'h1x = pcd / 2 * cos(60 deg)' },
        { id: 'h2', expr: 'h1y = pcd / 2 * sin(60 deg)' },
        { id: 'w1', expr: 'width = pcd + boss' },
        { id: 'f1', expr: 'flange = across + 2 * boss' },
        { id: 'f2', expr: 'flange = width + boss' },
        { id: 'f3', expr: 'flange = 2 * h1x + boss * 2 + chord' },
      ],
    });
    expect(result.contradictions.map((c) => c.relation).sort()).toEqual([
      'c1',
      'd1',
      'h1',
      'h2',
      'w1',
    ]);
    for (const c of result.contradictions) {
      expect(c.suspects[0]!.name).toBe('pcd');
      // 3.000 is what the other figures say: the correction takes 3 1/8 back to it.
      expect(result.values.pcd!.value! + c.suspects[0]!.correction).toBeCloseTo(3, 2);
    }
  });
});

describe('the calibration’s solve', () => {
  it('a four-point perspective whose DLT rows need later swaps maps each point to its plane position', () => {
    // Four corners of a 200 × 100 mm rectangle photographed at an angle. The DLT system of four
    // points has zeros on its diagonal by construction (rows [0 0 0 x y 1 …]), so partial
    // pivoting reorders it after the first step. Reference: ml-matrix's solve of the same
    // 8×8 system, and the plane positions themselves.
    const sheet = [
      { x: 103.5, y: 87.25 },
      { x: 911.75, y: 140.5 },
      { x: 860.25, y: 612.0 },
      { x: 131.0, y: 520.75 },
    ];
    const plane = [
      { x: 0, y: 0 },
      { x: 200, y: 0 },
      { x: 200, y: 100 },
      { x: 0, y: 100 },
    ];
    const rows: number[][] = [];
    const rhs: number[] = [];
    sheet.forEach((p, i) => {
      const q = plane[i]!;
      rows.push([p.x, p.y, 1, 0, 0, 0, -q.x * p.x, -q.x * p.y]);
      rhs.push(q.x);
      rows.push([0, 0, 0, p.x, p.y, 1, -q.y * p.x, -q.y * p.y]);
      rhs.push(q.y);
    });
    expect(laterSwaps(rows)).toBeGreaterThan(0);
    const h = mlSolve(new Matrix(rows), Matrix.columnVector(rhs)).to1DArray();
    const ours = factorDense(8, rows.flat())!.solve(rhs);
    h.forEach((v, i) => expect(ours[i]).toBeCloseTo(v, 9));

    // The calibration's own fit (normalised first, then the same LU solve) agrees with the
    // reference mapping at the corners and at points between them; six points take the
    // least-squares path (normal equations), four the exact one.
    const reference = (p: { x: number; y: number }) => {
      const [a, b, c, d, e, f, g, k] = h;
      const w = g! * p.x + k! * p.y + 1;
      return { x: (a! * p.x + b! * p.y + c!) / w, y: (d! * p.x + e! * p.y + f!) / w };
    };
    const extra = [
      { x: 500, y: 360 },
      { x: 300, y: 200 },
    ];
    for (const controls of [sheet, [...sheet, ...extra]]) {
      const cal = fitHomography(controls.map((s) => ({ px: s, mm: reference(s) })));
      for (const s of [...sheet, ...extra, { x: 700, y: 450 }]) {
        const mm = applyHomography(cal, s);
        const want = reference(s);
        expect(mm.x).toBeCloseTo(want.x, 6);
        expect(mm.y).toBeCloseTo(want.y, 6);
      }
    }
  });
});
