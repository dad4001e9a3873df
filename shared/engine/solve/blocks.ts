/**
 * Solving block by block, in dependency order. Linear blocks (every relation affine in the
 * block's unknowns) are solved directly with one LU solve. Non-linear blocks use damped Newton:
 * the full step is halved until the residual norm drops, with the forward-mode Jacobian; capped
 * by iterations and a time budget, and a failure names the relations and the residual left.
 */
import type { CompiledRelation } from '../expression';
import { linearizeBlock } from '../jacobian';
import { factorRows, maxAbs, nearlyEqual, TOLERANCES, type SparseRow } from '../numeric';
import type { SolveError } from '../result';
import { analyseStructure, type StructureResult } from '../structure';
import type { SolveOptions } from './options';
import type { PreparedModel } from './prepare';

interface BlockFailure {
  error?: SolveError;
}

interface SolveContext {
  maxIterations: number;
  deadline: number;
  /** The time limit the deadline came from, ms (for the message of a block it stopped). */
  timeLimitMs: number;
}

const now = (): number => (typeof performance !== 'undefined' ? performance.now() : Date.now());

function converged(rels: readonly CompiledRelation[], x: Float64Array, F: Float64Array): boolean {
  for (let i = 0; i < rels.length; i++) if (!nearlyEqual(F[i]!, 0, rels[i]!.scale(x))) return false;
  return true;
}

function norm2(F: Float64Array): number {
  let s = 0;
  for (let i = 0; i < F.length; i++) s += F[i]! * F[i]!;
  return Math.sqrt(s);
}

function residuals(rels: readonly CompiledRelation[], x: Float64Array, F: Float64Array): void {
  for (let i = 0; i < rels.length; i++) F[i] = rels[i]!.residual(x);
}

function describeNotFinite(
  ids: string[],
  rels: readonly CompiledRelation[],
  x: Float64Array,
): SolveError | null {
  for (const [i, rel] of rels.entries()) {
    const d = rel.diagnose(x);
    if (d)
      return {
        code: d.code === 'division-by-zero' ? 'division-by-zero' : 'not-finite',
        relation: ids[i],
        message: d.message,
        ...(d.at !== undefined ? { at: d.at } : {}),
      };
  }
  return null;
}

function describeBlock(
  ids: string[],
  unknowns: readonly number[],
  names: readonly string[],
): string {
  return `${ids.length === 1 ? 'relation' : 'relations'} ${ids.join(', ')} for ${unknowns.map((u) => names[u]).join(', ')}`;
}

/** The full Newton step −J⁻¹F, or null when J is singular. */
function newtonStep(n: number, lin: { F: Float64Array; rows: SparseRow[] }): Float64Array | null {
  const f = factorRows(n, lin.rows);
  if (!f) return null;
  const neg = new Float64Array(n);
  for (let i = 0; i < n; i++) neg[i] = -lin.F[i]!;
  return f.solve(neg);
}

function allFinite(v: Float64Array): boolean {
  for (let i = 0; i < v.length; i++) if (!Number.isFinite(v[i])) return false;
  return true;
}

/** Solves one square block in place; returns null on success. */
function solveBlock(
  ids: string[],
  rels: readonly CompiledRelation[],
  unknowns: readonly number[],
  names: readonly string[],
  x: Float64Array,
  colOf: Int32Array,
  ctx: SolveContext,
): BlockFailure | null {
  // A square block: n relations, n unknowns (F, d and base below have n entries); x and colOf
  // have one entry per dimension.
  const n = rels.length;
  for (const rel of rels)
    for (const v of rel.vars) if (colOf[v]! < 0 && !Number.isFinite(x[v])) return {}; // upstream failed
  const what = () => describeBlock(ids, unknowns, names);
  const linear = rels.every((r) => r.affine !== null || r.degreeIn((gi) => colOf[gi]! >= 0) <= 1);
  const F = new Float64Array(n);

  // Fast path: one affine relation, one unknown.
  const [first] = rels;
  const [firstUnknown] = unknowns;
  if (n === 1 && first?.affine && firstUnknown !== undefined) {
    const { a, c } = first.affine;
    let coef = 0;
    let rest = c;
    for (let j = 0; j < first.vars.length; j++) {
      const v = first.vars[j]!;
      if (colOf[v]! >= 0) coef += a[j]!;
      else rest += a[j]! * x[v]!;
    }
    if (coef === 0 || !Number.isFinite(rest)) {
      return {
        error: {
          code: 'singular',
          relation: ids[0],
          message: `${what()}: the relation does not depend on it`,
        },
      };
    }
    x[firstUnknown] = -rest / coef;
    return null;
  }

  if (linear) {
    // Affine in the unknowns: J does not depend on them, so one Newton step is the exact
    // solution; up to two refinement steps with the same factors recover digits lost to
    // conditioning.
    const lin = linearizeBlock(rels, colOf, x);
    if (!allFinite(lin.F)) {
      return {
        error: describeNotFinite(ids, rels, x) ?? {
          code: 'not-finite',
          relation: ids[0],
          message: `${what()}: no finite value`,
        },
      };
    }
    const factor = factorRows(n, lin.rows);
    if (!factor) {
      return {
        error: {
          code: 'singular',
          relation: ids[0],
          message: `${what()}: the relations are not independent, so they do not fix these values`,
        },
      };
    }
    const neg = new Float64Array(n);
    for (let c = 0; c < n; c++) neg[c] = -lin.F[c]!;
    for (let pass = 0; pass < 3; pass++) {
      const d = factor.solve(neg);
      for (let c = 0; c < n; c++) x[unknowns[c]!]! += d[c]!;
      residuals(rels, x, F);
      if (converged(rels, x, F)) return null;
      for (let c = 0; c < n; c++) neg[c] = -F[c]!;
    }
    const left = maxAbs(F);
    return {
      error: {
        code: 'no-convergence',
        relation: ids[0],
        message: `${what()}: the linear solve left a residual of ${left.toPrecision(3)}`,
        residual: left,
      },
    };
  }

  // Damped Newton.
  let lastNorm = Infinity;
  let timedOut = false;
  const trial = new Float64Array(n);
  for (let iter = 0; iter <= ctx.maxIterations; iter++) {
    const lin = linearizeBlock(rels, colOf, x);
    if (!allFinite(lin.F)) {
      return {
        error: describeNotFinite(ids, rels, x) ?? {
          code: 'not-finite',
          relation: ids[0],
          message: `${what()}: no finite value at the start point`,
        },
      };
    }
    if (converged(rels, x, lin.F)) {
      polish(n, lin, rels, unknowns, x, trial);
      return null;
    }
    lastNorm = norm2(lin.F);
    if (iter === ctx.maxIterations) break;
    if (now() > ctx.deadline) {
      timedOut = true;
      break;
    }
    const d = newtonStep(n, lin);
    if (!d) {
      // Singular Jacobian: nudge the unknowns off the singular point and try again.
      for (let c = 0; c < n; c++) {
        const u = unknowns[c]!;
        x[u]! += TOLERANCES.newtonNudge * (Math.abs(x[u]!) + 1) * (c % 2 ? -1 : 1);
      }
      continue;
    }
    const base = unknowns.map((u) => x[u]!);
    let lambda = 1;
    let accepted = false;
    while (lambda > TOLERANCES.newtonMinStep) {
      for (let c = 0; c < n; c++) x[unknowns[c]!] = base[c]! + lambda * d[c]!;
      residuals(rels, x, trial);
      const tn = norm2(trial);
      if (
        Number.isFinite(tn) &&
        tn < (1 - TOLERANCES.newtonSufficientDecrease * lambda) * lastNorm
      ) {
        accepted = true;
        break;
      }
      lambda /= 2;
    }
    if (!accepted) {
      for (let c = 0; c < n; c++) x[unknowns[c]!] = base[c]!;
      break;
    }
  }
  residuals(rels, x, F);
  const left = Number.isFinite(maxAbs(F)) ? maxAbs(F) : lastNorm;
  for (const u of unknowns) x[u] = NaN;
  if (timedOut) {
    return {
      error: {
        code: 'no-convergence',
        relation: ids[0],
        message: `${what()} was stopped by the time limit of ${ctx.timeLimitMs} ms before it converged (largest residual ${left.toPrecision(3)})`,
        residual: left,
        timeLimitMs: ctx.timeLimitMs,
      },
    };
  }
  return {
    error: {
      code: 'no-convergence',
      relation: ids[0],
      message: `${what()} did not converge (largest residual ${left.toPrecision(3)}); try a guess nearer the answer`,
      residual: left,
    },
  };
}

/**
 * One more full Newton step once the residual is within tolerance: convergence is quadratic,
 * so this takes the solution from "agrees to 1e-9 of its terms" to full precision. Kept only
 * if it does not make the residual worse.
 */
function polish(
  n: number,
  lin: { F: Float64Array; rows: SparseRow[] },
  rels: readonly CompiledRelation[],
  unknowns: readonly number[],
  x: Float64Array,
  trial: Float64Array,
): void {
  const d = newtonStep(n, lin);
  if (!d) return;
  const before = norm2(lin.F);
  const base = unknowns.map((u) => x[u]!);
  for (let c = 0; c < n; c++) x[unknowns[c]!] = base[c]! + d[c]!;
  residuals(rels, x, trial);
  if (!(norm2(trial) <= before)) for (let c = 0; c < n; c++) x[unknowns[c]!] = base[c]!;
}

export interface SolvedBlock {
  relations: CompiledRelation[];
  ids: string[];
  relationIndices: number[];
  unknowns: number[];
}

/** Everything about a solved model that the result and a re-solve (Monte Carlo) need. */
export interface Solution {
  prep: PreparedModel;
  structure: StructureResult;
  unknownDims: number[];
  blocks: Array<SolvedBlock & { ok: boolean }>;
  x: Float64Array;
  errors: SolveError[];
}

export function solveStructure(prep: PreparedModel, options: SolveOptions): Solution {
  const dims = prep.dimensions;
  const x = new Float64Array(dims.length);
  const unknownOf = new Int32Array(dims.length).fill(-1);
  const unknownDims: number[] = [];
  for (const d of dims) {
    if (d.given) x[d.index] = d.value;
    else {
      x[d.index] = d.start;
      if (!d.broken) {
        unknownOf[d.index] = unknownDims.length;
        unknownDims.push(d.index);
      }
    }
  }
  const edges = prep.relations.map((r) => {
    const e: number[] = [];
    for (const v of r.compiled.vars) {
      const u = unknownOf[v]!;
      if (u >= 0) e.push(u);
    }
    return e;
  });
  const structure = analyseStructure(prep.relations.length, unknownDims.length, edges);
  const timeLimitMs = options.timeLimitMs ?? 2000;
  const ctx: SolveContext = {
    maxIterations: options.maxIterations ?? 100,
    deadline: now() + timeLimitMs,
    timeLimitMs,
  };
  const colOf = new Int32Array(dims.length).fill(-1);
  const names = dims.map((d) => d.name);
  const errors: SolveError[] = [];
  const blocks: Solution['blocks'] = [];
  // The structure's indices count the relations and unknowns it was given.
  for (const b of structure.blocks) {
    const relations = b.relations.map((r) => prep.relations[r]!.compiled);
    const ids = b.relations.map((r) => prep.relations[r]!.id);
    const unknowns = b.unknowns.map((u) => unknownDims[u]!);
    unknowns.forEach((u, c) => (colOf[u] = c));
    const failure = solveBlock(ids, relations, unknowns, names, x, colOf, ctx);
    unknowns.forEach((u) => (colOf[u] = -1));
    if (failure) {
      for (const u of unknowns) x[u] = NaN;
      if (failure.error) errors.push(failure.error);
    }
    blocks.push({ relations, ids, relationIndices: b.relations, unknowns, ok: !failure });
  }
  for (const u of structure.underdetermined.flatMap((g) => g.unknowns)) x[unknownDims[u]!] = NaN;
  return { prep, structure, unknownDims, blocks, x, errors };
}

/** Re-solves the blocks in place (after given values changed); false if any failed. */
export function resolveBlocks(sol: Solution, x: Float64Array, blocks: Solution['blocks']): boolean {
  const colOf = new Int32Array(x.length).fill(-1);
  const names = sol.prep.dimensions.map((d) => d.name);
  const ctx: SolveContext = { maxIterations: 50, deadline: now() + 1000, timeLimitMs: 1000 };
  for (const b of blocks) {
    if (!b.ok) continue;
    b.unknowns.forEach((u, c) => (colOf[u] = c));
    const failure = solveBlock(b.ids, b.relations, b.unknowns, names, x, colOf, ctx);
    b.unknowns.forEach((u) => (colOf[u] = -1));
    if (failure) return false;
  }
  return true;
}
