import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { mulberry32, normalSampler, solveModel, stackUp } from '@shared/engine';

type Dim = Record<string, unknown>;
const model = (
  dimensions: Dim[],
  relations: Array<[string, string]>,
  units: 'in' | 'mm' = 'in',
) => ({
  format: 'fairsheet.model',
  version: 1,
  units,
  dimensions,
  relations: relations.map(([id, expr]) => ({ id, expr })),
});

// Shigley's Mechanical Engineering Design, 9th ed., Example 1-3 (shouldered screw), inch.
const shigley = model(
  [
    { name: 'a', kind: 'stated', value: '1.750', tol: '0.003' },
    { name: 'b', kind: 'stated', value: '0.750', tol: '0.001' },
    { name: 'c', kind: 'stated', value: '0.120', tol: '0.005' },
    { name: 'd', kind: 'stated', value: '0.875', tol: '0.001' },
    { name: 'w', kind: 'derived' },
  ],
  [['gap', 'w = a - b - c - d']],
);

describe('stack-up', () => {
  it("matches Shigley's Example 1-3: w = 0.005 ± 0.010 worst case, ± 0.006 RSS", () => {
    const w = solveModel(shigley).values.w!;
    expect(w.value).toBeCloseTo(0.005, 12); // Shigley Ex. 1-3: w̄ = 0.005 in
    expect(w.worstCase).toBeCloseTo(0.01, 12); // Shigley Ex. 1-3: t_w = 0.010 in
    expect(w.rss).toBeCloseTo(0.006, 12); // √Σt² = 0.006 in (check-values §7.2, Shigley's own formula)
    expect(w.contributors[0]).toMatchObject({
      name: 'c',
      sensitivity: -1,
      share: expect.closeTo(25 / 36, 12),
    });
  });

  it('weights contributors by non-unit sensitivities (check-values §7.4)', () => {
    // X = L1 + D_bore/2 − D_pin/2 − L2 → 24.000, worst case 0.110, RSS 0.062450 [computed, check-values §7.4].
    const r = solveModel(
      model(
        [
          { name: 'L1', kind: 'stated', value: '50.00', tol: '0.05' },
          { name: 'Dbore', kind: 'stated', value: '20.00', tol: '0.04' },
          { name: 'Dpin', kind: 'stated', value: '12.00', tol: '0.02' },
          { name: 'L2', kind: 'stated', value: '30.00', tol: '0.03' },
          { name: 'X', kind: 'derived' },
        ],
        [['hole', 'X = L1 + Dbore / 2 - Dpin / 2 - L2']],
        'mm',
      ),
    );
    const X = r.values.X!;
    expect(X.value).toBeCloseTo(24, 12);
    expect(X.worstCase).toBeCloseTo(0.11, 12);
    expect(X.rss).toBeCloseTo(0.06245, 6);
    expect(Object.fromEntries(X.contributors.map((c) => [c.name, c.sensitivity]))).toEqual({
      L1: 1,
      Dbore: 0.5,
      Dpin: -0.5,
      L2: -1,
    });
  });

  it('shifts the centre of a value with an unequal tolerance and uses the half-band', () => {
    // slot = overall − boss; boss +0.004/−0.002 → mid-limit 0.751 ± 0.003 (Scholz; Shigley §1-13).
    const r = solveModel(
      model(
        [
          { name: 'overall', kind: 'stated', value: '2.000', tol: '0.001' },
          { name: 'boss', kind: 'stated', value: '0.750', tolPlus: '0.004', tolMinus: '0.002' },
          { name: 'slot', kind: 'derived' },
        ],
        [['r', 'overall = boss + slot']],
      ),
    );
    expect(r.values.boss).toMatchObject({ worstCase: 0.003, mean: expect.closeTo(0.751, 12) });
    const slot = r.values.slot!;
    expect(slot.value).toBeCloseTo(1.25, 12);
    expect(slot.worstCase).toBeCloseTo(0.004, 12);
    expect(slot.mean).toBeCloseTo(1.249, 12);
    expect(slot.tolPlus).toBeCloseTo(0.003, 12);
    expect(slot.tolMinus).toBeCloseTo(0.005, 12);
  });

  it('differentiates through a non-linear block as finite differences of re-solves do', () => {
    const build = (r: number, off: number) =>
      model(
        [
          { name: 'r', kind: 'stated', value: r, tol: 0.01 },
          { name: 'off', kind: 'stated', value: off, tol: 0.01 },
          { name: 'x', kind: 'derived' },
          { name: 'y', kind: 'derived', guess: 10 },
          { name: 'h', kind: 'derived' },
        ],
        [
          ['c1', 'hypot(x, y) = r'],
          ['c2', 'hypot(x - off, y) = r'],
          ['c3', 'h = 2 * y'],
        ],
        'mm',
      );
    const base = solveModel(build(50, 60)).values.h!;
    const e = 1e-6;
    const dr =
      (solveModel(build(50 + e, 60)).values.h!.value! -
        solveModel(build(50 - e, 60)).values.h!.value!) /
      (2 * e);
    const doff =
      (solveModel(build(50, 60 + e)).values.h!.value! -
        solveModel(build(50, 60 - e)).values.h!.value!) /
      (2 * e);
    const sens = Object.fromEntries(base.contributors.map((c) => [c.name, c.sensitivity]));
    expect(sens.r).toBeCloseTo(dr, 5);
    expect(sens.off).toBeCloseTo(doff, 5);
  });

  it('gives contributor shares that sum to 1 (property)', () => {
    fc.assert(
      fc.property(
        fc.array(
          fc.tuple(
            fc
              .integer({ min: -300, max: 300 })
              .filter((v) => v !== 0)
              .map((v) => v / 100),
            fc.integer({ min: 1, max: 1000 }).map((v) => v / 10000),
          ),
          { minLength: 1, maxLength: 8 },
        ),
        (terms) => {
          const s = new Map(terms.map(([a], i) => [i, a]));
          const st = stackUp(
            s,
            terms.map(([, t]) => t),
            terms.map(() => 0),
          );
          expect(st.terms.reduce((p, t) => p + t.share, 0)).toBeCloseTo(1, 12);
          expect(st.rss).toBeLessThanOrEqual(st.worstCase * (1 + 1e-12));
        },
      ),
      { numRuns: 500 },
    );
  });
});

describe('Monte Carlo', () => {
  it('reproduces the RSS spread of Shigley Example 1-3 with σ = t/3', () => {
    // With tᵢ = 3σᵢ, σ_w = 0.006/3 = 0.002 in (check-values §7.2).
    const r = solveModel(shigley, { monteCarlo: { samples: 20000, seed: 11 } });
    const w = r.monteCarlo!.values.w!;
    expect(w.mean).toBeCloseTo(0.005, 4);
    expect(Math.abs(w.sigma - 0.002) / 0.002).toBeLessThan(0.03);
    expect(w.histogram.counts.reduce((p, c) => p + c, 0)).toBe(20000);
    expect(w.histogram.edges).toHaveLength(21);
    expect(w.min).toBeLessThan(w.mean);
    expect(r.monteCarlo!.failed).toBe(0);
  });

  it('gives the same numbers for the same seed and different ones for another', () => {
    const a = solveModel(shigley, { monteCarlo: { samples: 500, seed: 3 } }).monteCarlo!.values.w!;
    const b = solveModel(shigley, { monteCarlo: { samples: 500, seed: 3 } }).monteCarlo!.values.w;
    const c = solveModel(shigley, { monteCarlo: { samples: 500, seed: 4 } }).monteCarlo!.values.w!;
    expect(b).toEqual(a);
    expect(c.mean).not.toBe(a.mean);
  });

  it('re-solves non-linear blocks for each sample', () => {
    // y = sqrt(r² − a²) is curved: its Monte Carlo mean sits below the nominal.
    const r = solveModel(
      model(
        [
          { name: 'r', kind: 'stated', value: 10, tol: 0.3 },
          { name: 'a', kind: 'stated', value: 9.5, tol: 0.3 },
          { name: 'y', kind: 'derived' },
        ],
        [['c', 'hypot(a, y) = r']],
        'mm',
      ),
      { monteCarlo: { samples: 4000, seed: 5, values: ['y'] } },
    );
    const mc = r.monteCarlo!;
    expect(Object.keys(mc.values)).toEqual(['y']);
    expect(mc.values.y!.mean + mc.failed * 0).toBeLessThan(r.values.y!.value!);
  });

  it('draws uniform and normal numbers from a seed', () => {
    const u = mulberry32(42);
    const first = u();
    expect(mulberry32(42)()).toBe(first);
    expect(first).toBeGreaterThanOrEqual(0);
    expect(first).toBeLessThan(1);
    const z = normalSampler(mulberry32(9));
    let s = 0;
    let s2 = 0;
    const n = 20000;
    for (let i = 0; i < n; i++) {
      const v = z();
      s += v;
      s2 += v * v;
    }
    expect(Math.abs(s / n)).toBeLessThan(0.03);
    expect(Math.sqrt(s2 / n)).toBeCloseTo(1, 1);
  });
});
