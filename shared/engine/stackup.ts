/**
 * Tolerance stack-up: how each derived value moves with each given value, and what that means
 * for its tolerance.
 *
 * Sensitivities come from implicit differentiation through the solved blocks, in solving
 * order: for a block F(u, v) = 0 with unknowns u and inputs v, du/dg = −J⁻¹·(∂F/∂v · dv/dg).
 * Only non-zero entries are carried (a derived value depends on few given values), so the cost
 * grows with the size of the dependency sets, not with the square of the model.
 *
 * Tolerances t are half-bands read as 3σ (Scholz 1995; Shigley §1-13): worst case Σ|sᵢ|·tᵢ and
 * RSS √Σ(sᵢ·tᵢ)², which is then also a 3σ figure. An unequal tolerance (+a/−b) is replaced by
 * its mid-limit: mean shifted by (a − b)/2 with the half-band (a + b)/2 (Scholz; Shigley), so
 * the nominal value is solved as drawn and the centre of the band moves by Σ sᵢ·shiftᵢ.
 */
import type { CompiledRelation } from './expression';
import { linearizeBlock } from './jacobian';
import { factorRows } from './numeric';
import type { MonteCarloResult, MonteCarloValue } from './result';

/** ∂(value)/∂(given value), keyed by the given dimension's index. */
export type Sensitivity = Map<number, number>;

export interface SensitivityBlock {
  relations: readonly CompiledRelation[];
  /** Global indices of the block's unknowns, unknowns[i] matched to relations[i]. */
  unknowns: readonly number[];
}

function addTo(m: Sensitivity, key: number, v: number): void {
  if (v === 0) return;
  m.set(key, (m.get(key) ?? 0) + v);
}

/**
 * Sensitivities of every solved derived value to the given values. Blocks must be in solving
 * order and already solved at x. A given value's sensitivity to itself is 1.
 *
 * @example
 * // c = a + 2·b  →  sens[c] = Map { a → 1, b → 2 }
 * propagateSensitivities(blocks, x, isGiven)
 */
export function propagateSensitivities(
  blocks: readonly SensitivityBlock[],
  x: Float64Array,
  isGiven: Uint8Array,
): Array<Sensitivity | undefined> {
  const sens: Array<Sensitivity | undefined> = new Array(x.length);
  for (let i = 0; i < x.length; i++) if (isGiven[i]) sens[i] = new Map([[i, 1]]);
  const colOf = new Int32Array(x.length).fill(-1);
  for (const block of blocks) {
    const n = block.unknowns.length;
    const [rel] = block.relations;
    if (n === 1 && rel?.affine) {
      // The common case (one affine relation fixing one value) straight from its coefficients.
      const { a } = rel.affine;
      const u = block.unknowns[0]!;
      let J = 0;
      for (let j = 0; j < a.length; j++) if (rel.vars[j] === u) J += a[j]!;
      if (J === 0) continue;
      const out: Sensitivity = new Map();
      let missing = false;
      for (let j = 0; j < a.length && !missing; j++) {
        const v = rel.vars[j]!;
        if (v === u || a[j] === 0) continue;
        const s = sens[v];
        if (!s) missing = true;
        else for (const [g, w] of s) addTo(out, g, (-a[j]! * w) / J);
      }
      if (!missing) sens[u] = out;
      continue;
    }
    block.unknowns.forEach((u, c) => (colOf[u] = c));
    const lin = linearizeBlock(block.relations, colOf, x, true);
    block.unknowns.forEach((u) => (colOf[u] = -1));
    const M: Sensitivity[] = [];
    let missing = false;
    for (let i = 0; i < n && !missing; i++) {
      const m: Sensitivity = new Map();
      const { idx, val } = lin.outer[i]!;
      for (let t = 0; t < idx.length; t++) {
        const s = sens[idx[t]!];
        if (!s) {
          missing = true;
          break;
        }
        for (const [g, v] of s) addTo(m, g, val[t]! * v);
      }
      M.push(m);
    }
    if (missing) continue;
    if (n === 1) {
      const row = lin.rows[0]!;
      let J = 0;
      for (let t = 0; t < row.cols.length; t++) J += row.vals[t]!;
      if (J === 0 || !Number.isFinite(J)) continue;
      const out: Sensitivity = new Map();
      for (const [g, v] of M[0]!) addTo(out, g, -v / J);
      sens[block.unknowns[0]!] = out;
      continue;
    }
    const factor = factorRows(n, lin.rows);
    if (!factor) continue;
    const keys = new Set<number>();
    for (const m of M) for (const g of m.keys()) keys.add(g);
    const outs: Sensitivity[] = block.unknowns.map(() => new Map());
    const b = new Float64Array(n);
    for (const g of keys) {
      for (let i = 0; i < n; i++) b[i] = -(M[i]!.get(g) ?? 0);
      const col = factor.solve(b);
      for (let c = 0; c < n; c++) addTo(outs[c]!, g, col[c]!);
    }
    block.unknowns.forEach((u, c) => (sens[u] = outs[c]));
  }
  return sens;
}

/**
 * The total derivative of a relation's residual with respect to the given values, through the
 * derived values it uses; null if one of them has no sensitivity.
 *
 * @example totalDerivative(rel, x, sens) // Map { overall → 1, boss → −1, … }
 */
export function totalDerivative(
  rel: CompiledRelation,
  x: Float64Array,
  sens: ReadonlyArray<Sensitivity | undefined>,
): Sensitivity | null {
  let g: Float64Array;
  if (rel.affine) g = rel.affine.a;
  else {
    g = new Float64Array(rel.vars.length);
    rel.gradient(x, g);
  }
  const out: Sensitivity = new Map();
  for (let j = 0; j < g.length; j++) {
    if (g[j] === 0) continue;
    const s = sens[rel.vars[j]!];
    if (!s) return null;
    for (const [k, v] of s) addTo(out, k, g[j]! * v);
  }
  return out;
}

export interface StackUpTerm {
  index: number;
  sensitivity: number;
  share: number;
}

export interface StackUp {
  worstCase: number;
  rss: number;
  /** Movement of the band's centre from unequal tolerances: Σ sᵢ·shiftᵢ. */
  meanShift: number;
  /** Largest share first. */
  terms: StackUpTerm[];
}

/**
 * Worst case, RSS and contributor shares of one value.
 *
 * @example
 * // Shigley Example 1-3: w = a − b − c − d with ±0.003, 0.001, 0.005, 0.001
 * stackUp(new Map([[0, 1], [1, -1], [2, -1], [3, -1]]), [0.003, 0.001, 0.005, 0.001], [0, 0, 0, 0])
 * // { worstCase: 0.010, rss: 0.006, … }
 */
export function stackUp(
  s: Sensitivity,
  halfBand: ArrayLike<number>,
  shift: ArrayLike<number>,
): StackUp {
  let wc = 0;
  let variance = 0;
  let meanShift = 0;
  for (const [g, v] of s) {
    const t = halfBand[g]!;
    wc += Math.abs(v) * t;
    variance += v * t * (v * t);
    meanShift += v * shift[g]!;
  }
  const terms: StackUpTerm[] = [];
  for (const [g, v] of s) {
    const st = v * halfBand[g]!;
    terms.push({ index: g, sensitivity: v, share: variance > 0 ? (st * st) / variance : 0 });
  }
  terms.sort(
    (p, q) =>
      q.share - p.share || Math.abs(q.sensitivity) - Math.abs(p.sensitivity) || p.index - q.index,
  );
  return { worstCase: wc, rss: Math.sqrt(variance), meanShift, terms };
}

/**
 * A small seeded PRNG (mulberry32): uniform numbers in [0, 1), the same sequence for the same
 * seed on every platform.
 *
 * @example const next = mulberry32(42); next() // 0.6011037519201636
 */
export function mulberry32(seed: number): () => number {
  let a = seed >>> 0;
  return () => {
    a = (a + 0x6d2b79f5) >>> 0;
    let t = a;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
}

/**
 * Standard normal variates by Box–Muller from a uniform source (the spare is kept).
 *
 * @example const z = normalSampler(mulberry32(1)); z() // a N(0, 1) draw
 */
export function normalSampler(uniform: () => number): () => number {
  let spare: number | null = null;
  return () => {
    if (spare !== null) {
      const s = spare;
      spare = null;
      return s;
    }
    let u = 0;
    while (u <= Number.MIN_VALUE) u = uniform();
    const v = uniform();
    const r = Math.sqrt(-2 * Math.log(u));
    spare = r * Math.sin(2 * Math.PI * v);
    return r * Math.cos(2 * Math.PI * v);
  };
}

export interface MonteCarloInput {
  samples: number;
  seed: number;
  bins: number;
  /** Given values to vary: each drawn from N(mean, σ) with σ = half-band / 3. */
  givens: Array<{ index: number; mean: number; sigma: number }>;
  /** Values to record. */
  targets: Array<{ name: string; index: number }>;
  /** Starting point (the nominal solution). */
  x0: Float64Array;
  /** Re-solves x in place after the givens were set; false if the solve failed. */
  resolve: (x: Float64Array) => boolean;
  onProgress?: (done: number, total: number) => void;
}

/**
 * Seeded Monte Carlo of the full (non-linear) model: each sample draws the given values and
 * re-solves, so it also shows what the linear stack-up misses.
 *
 * @example runMonteCarlo({ samples: 1000, seed: 1, bins: 20, givens, targets, x0, resolve }).values.w.sigma
 */
export function runMonteCarlo(input: MonteCarloInput): MonteCarloResult {
  const { samples, seed, bins, givens, targets, x0, resolve, onProgress } = input;
  const z = normalSampler(mulberry32(seed));
  const record = targets.map(() => new Float64Array(samples));
  const x = new Float64Array(x0.length);
  let kept = 0;
  let failed = 0;
  for (let s = 0; s < samples; s++) {
    if (onProgress && s % 250 === 0) onProgress(s, samples);
    x.set(x0);
    for (const g of givens) x[g.index] = g.mean + g.sigma * z();
    if (!resolve(x)) {
      failed++;
      continue;
    }
    let ok = true;
    for (const t of targets) if (!Number.isFinite(x[t.index])) ok = false;
    if (!ok) {
      failed++;
      continue;
    }
    targets.forEach((t, i) => (record[i]![kept] = x[t.index]!));
    kept++;
  }
  onProgress?.(samples, samples);
  const values: Record<string, MonteCarloValue> = {};
  targets.forEach((t, i) => {
    const data = record[i]!.subarray(0, kept);
    values[t.name] = summarise(data, bins);
  });
  return { samples, seed, failed, values };
}

function summarise(data: Float64Array, bins: number): MonteCarloValue {
  const n = data.length;
  if (n === 0)
    return { mean: NaN, sigma: NaN, min: NaN, max: NaN, histogram: { edges: [], counts: [] } };
  // Welford's update keeps the variance accurate when the spread is tiny next to the mean.
  let mean = 0;
  let m2 = 0;
  let min = Infinity;
  let max = -Infinity;
  for (let i = 0; i < n; i++) {
    const v = data[i]!;
    const d = v - mean;
    mean += d / (i + 1);
    m2 += d * (v - mean);
    if (v < min) min = v;
    if (v > max) max = v;
  }
  const sigma = n > 1 ? Math.sqrt(m2 / (n - 1)) : 0;
  const width = (max - min) / bins;
  const counts = new Array<number>(width > 0 ? bins : 1).fill(0);
  const edges =
    width > 0
      ? Array.from({ length: bins + 1 }, (_, i) => (i === bins ? max : min + i * width))
      : [min, max];
  for (let i = 0; i < n; i++) {
    const b = width > 0 ? Math.min(bins - 1, Math.floor((data[i]! - min) / width)) : 0;
    counts[b]!++;
  }
  return { mean, sigma, min, max, histogram: { edges, counts } };
}
