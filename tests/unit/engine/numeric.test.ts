import fc from 'fast-check';
import { Matrix, solve as mlSolve } from 'ml-matrix';
import { describe, expect, it } from 'vitest';
import { factorDense, factorRows, factorSparse, nearlyEqual } from '@shared/engine/numeric';

describe('nearlyEqual', () => {
  it('accepts rounding noise and rejects real differences', () => {
    expect(nearlyEqual(0.1 + 0.2, 0.3)).toBe(true);
    expect(nearlyEqual(0.015 * 25.4, 0.381)).toBe(true);
    expect(nearlyEqual(1, 1.000001)).toBe(false);
    expect(nearlyEqual(0, 1e-6)).toBe(false);
  });

  it('judges a residual against the given scale, not against zero', () => {
    // 1e-8 left over from terms of size 1e3 is rounding; against size 1 it is not.
    expect(nearlyEqual(1e-7, 0, 1e3)).toBe(true);
    expect(nearlyEqual(1e-7, 0, 1)).toBe(false);
  });

  it('never calls NaN or infinity equal to a number', () => {
    expect(nearlyEqual(NaN, 0)).toBe(false);
    expect(nearlyEqual(Infinity, 1e300)).toBe(false);
  });
});

describe('linear solvers', () => {
  it('solve a small system with dense LU and partial pivoting', () => {
    // A zero on the diagonal needs a row swap.
    const f = factorDense(2, [0, 1, 1, 1])!;
    const x = f.solve([2, 3]);
    expect(x[0]).toBeCloseTo(1, 12);
    expect(x[1]).toBeCloseTo(2, 12);
  });

  it('report a singular matrix as null', () => {
    expect(factorDense(2, [1, 2, 2, 4])).toBeNull();
    expect(
      factorSparse(2, [
        { cols: [0, 1], vals: [1, 2] },
        { cols: [0, 1], vals: [2, 4] },
      ]),
    ).toBeNull();
  });

  it('agree with ml-matrix on random well-conditioned systems, dense and sparse', () => {
    fc.assert(
      fc.property(
        fc.integer({ min: 1, max: 40 }),
        fc.integer({ min: 1, max: 2 ** 31 - 1 }),
        fc.boolean(),
        (n, seed, sparse) => {
          let s = seed;
          const rnd = () => ((s = (s * 48271) % 2147483647) / 2147483647) * 2 - 1;
          const A: number[][] = Array.from({ length: n }, (_, i) =>
            Array.from({ length: n }, (_, j) =>
              i === j ? n + 1 : sparse && rnd() < 0.6 ? 0 : rnd(),
            ),
          );
          const b = Array.from({ length: n }, rnd);
          const rows = A.map((r) => {
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
          const ours = (sparse ? factorSparse(n, rows) : factorRows(n, rows))!.solve(b);
          const ref = mlSolve(new Matrix(A), Matrix.columnVector(b)).to1DArray();
          ref.forEach((v, i) => expect(Math.abs(ours[i]! - v)).toBeLessThan(1e-9));
        },
      ),
      { numRuns: 300 },
    );
  });

  it('solve a cyclic banded system of 300 unknowns sparsely', () => {
    const n = 300;
    const rows = Array.from({ length: n }, (_, i) => ({
      cols: [i, (i + 1) % n, (i + n - 1) % n],
      vals: [1, 0.3, -0.2],
    }));
    const x = factorSparse(n, rows)!.solve(new Array(n).fill(1.1));
    // Each row sums to 1.1: every x_i = 1.1 / (1 + 0.3 − 0.2) = 1.
    for (const v of x) expect(v).toBeCloseTo(1, 12);
  });
});
