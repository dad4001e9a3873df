/**
 * Solving a model: read and check it, find its structure, solve block by block, reconcile the
 * redundant relations and stack up the tolerances.
 *
 * Linear blocks (every relation affine in the block's unknowns) are solved directly with one
 * LU solve. Non-linear blocks use damped Newton: the full step is halved until the residual
 * norm drops, with the forward-mode Jacobian; capped by iterations and a time budget, and a
 * failure names the relations and the residual left. Each derived value keeps its trace.
 */
import {
  ExpressionError,
  RESERVED_NAMES,
  bindRelation,
  parseRelation,
  type CompiledRelation,
} from './expression';
import { linearizeBlock } from './jacobian';
import {
  impliedTolerance,
  modelSchema,
  scaledTolerance,
  toleranceDefaults,
  type DimensionKind,
  type FairsheetModel,
  type QuantityKind,
  type ToleranceDefaults,
} from './model';
import { factorRows, maxAbs, nearlyEqual, type SparseRow } from './numeric';
import type { ModelUnit } from './length';
import { parseQuantity, quantityIn, QuantityError, type Quantity } from './quantity';
import { reconcileRedundant, type RedundantRelation } from './reconcile';
import type { EngineError, SolveResult, SolveStatus, ValueResult, ValueTrace } from './result';
import { analyseStructure, type StructureResult } from './structure';
import {
  propagateSensitivities,
  runMonteCarlo,
  stackUp,
  totalDerivative,
  type Sensitivity,
} from './stackup';

export interface SolveOptions {
  /** Seeded Monte Carlo of the derived values (all determined ones unless `values` lists names). */
  monteCarlo?: {
    samples: number;
    seed?: number;
    values?: string[];
    bins?: number;
    /** Called every few hundred samples (and at the end): for a progress bar. */
    onProgress?: (done: number, total: number) => void;
  };
  /** Newton iterations per non-linear block (default 100). */
  maxIterations?: number;
  /** Time budget for all Newton iterations, ms (default 2000). */
  timeLimitMs?: number;
  /**
   * Values only: skip the stack-up and with it the reconciliation (which needs the
   * sensitivities), for the quickest possible preview. Derived values then have null
   * worstCase/rss and no contributors, and there are no checks or contradictions.
   */
  valuesOnly?: boolean;
}

export interface PreparedDimension {
  name: string;
  index: number;
  kind: DimensionKind;
  quantity: QuantityKind;
  given: boolean;
  /** A value that could not be read: relations using it are left out (the error is reported). */
  broken: boolean;
  /** Model unit (degrees, count); NaN for derived. */
  value: number;
  /** Half-band tolerance and centre shift (0 for a symmetric tolerance). */
  halfBand: number;
  shift: number;
  tolPlus?: number;
  tolMinus?: number;
  /** Newton starting point for a derived value. */
  start: number;
}

export interface PreparedRelation {
  id: string;
  expr: string;
  compiled: CompiledRelation;
}

export interface PreparedModel {
  unit: ModelUnit;
  dimensions: PreparedDimension[];
  byName: Map<string, PreparedDimension>;
  relations: PreparedRelation[];
  errors: EngineError[];
}

function badValue(
  pd: PreparedDimension,
  errors: EngineError[],
  field: string,
  r: { message: string; at?: number },
): void {
  pd.broken = true;
  errors.push({
    code: 'bad-value',
    dimension: pd.name,
    message: `${field}: ${r.message}`,
    ...(r.at !== undefined ? { at: r.at } : {}),
  });
}

type ValueRead =
  { ok: true; value: number; q: Quantity | null } | { ok: false; message: string; at?: number };

/** Reads a value (number in the model unit, or a written quantity) as the given quantity. */
function readValue(v: number | string, quantity: QuantityKind, unit: ModelUnit): ValueRead {
  if (typeof v === 'number') return { ok: true, value: v, q: null };
  try {
    const q = parseQuantity(v);
    if (quantity === 'length' && q.dimension === 'angle')
      return { ok: false, message: `unit mismatch: '${v}' is an angle, this dimension a length` };
    if (quantity === 'angle' && q.dimension === 'length')
      return { ok: false, message: `unit mismatch: '${v}' is a length, this dimension an angle` };
    if (quantity === 'count' && q.dimension !== 'plain')
      return { ok: false, message: `unit mismatch: a count takes a plain number, not '${v}'` };
    return {
      ok: true,
      value: quantity === 'length' ? quantityIn(q, unit) : q.exact.num / q.exact.den,
      q,
    };
  } catch (e) {
    if (e instanceof QuantityError) return { ok: false, message: e.message, at: e.at };
    throw e;
  }
}

function writtenTolerance(
  read: { value: number; q: Quantity | null },
  quantity: QuantityKind,
  unit: ModelUnit,
  defaults: ToleranceDefaults,
): number {
  // A JSON number loses trailing zeros (0.750 arrives as 0.75): its implied tolerance is read
  // from its shortest decimal form. Write the value as a string to keep the precision.
  let q = read.q;
  if (!q) {
    try {
      q = parseQuantity(String(read.value));
    } catch {
      q = parseQuantity('0.0000');
    }
  }
  return impliedTolerance(q, quantity, unit, defaults);
}

/**
 * Reads a checked model: values to the model unit, tolerances (given or implied), relations
 * parsed, checked and compiled. Problems are collected, not thrown.
 *
 * @example prepareModel(modelSchema.parse(json)).errors // []
 */
export function prepareModel(model: FairsheetModel): PreparedModel {
  const unit = model.units;
  const defaults = toleranceDefaults(model.defaults);
  const errors: EngineError[] = [];
  const dimensions: PreparedDimension[] = [];
  const byName = new Map<string, PreparedDimension>();

  for (const d of model.dimensions) {
    if (byName.has(d.name)) {
      errors.push({
        code: 'duplicate-name',
        dimension: d.name,
        message: `'${d.name}' is defined more than once`,
      });
      continue;
    }
    if (RESERVED_NAMES.has(d.name)) {
      errors.push({
        code: 'reserved-name',
        dimension: d.name,
        message:
          d.name === '__proto__'
            ? `'${d.name}' is reserved (JavaScript objects keep it for themselves)`
            : `'${d.name}' is reserved (a unit, function or operator name)`,
      });
      continue;
    }
    const pd: PreparedDimension = {
      name: d.name,
      index: dimensions.length,
      kind: d.kind,
      quantity: d.quantity,
      given: d.kind !== 'derived',
      broken: false,
      value: NaN,
      halfBand: 0,
      shift: 0,
      start: NaN,
    };
    const fail = badValue.bind(null, pd, errors);
    if (d.kind === 'derived') {
      if (d.guess !== undefined) {
        const g = readValue(d.guess, d.quantity, unit);
        if (g.ok) pd.start = g.value;
        else fail('guess', g);
      }
    } else {
      const v = readValue(d.value, d.quantity, unit);
      if (!v.ok) fail('value', v);
      else {
        pd.value = v.value;
        if (d.tol !== undefined) {
          const t = readValue(d.tol, d.quantity, unit);
          if (!t.ok) fail('tol', t);
          else if (t.value < 0)
            fail('tol', { message: 'a tolerance is a size: give it without a sign' });
          else pd.halfBand = t.value;
        } else if (d.tolPlus !== undefined && d.tolMinus !== undefined) {
          const p = readValue(d.tolPlus, d.quantity, unit);
          const m = readValue(d.tolMinus, d.quantity, unit);
          if (!p.ok) fail('tolPlus', p);
          else if (!m.ok) fail('tolMinus', m);
          else {
            // Both are sizes: tolMinus 0.002 (or −0.002) means 0.002 below nominal.
            const plus = Math.abs(p.value);
            const minus = Math.abs(m.value);
            pd.tolPlus = plus;
            pd.tolMinus = minus;
            pd.halfBand = (plus + minus) / 2;
            pd.shift = (plus - minus) / 2;
          }
        } else if (d.quantity === 'count') {
          pd.halfBand = 0;
        } else if (d.kind === 'scaled') {
          pd.halfBand =
            d.quantity === 'angle' ? defaults.angleDeg : scaledTolerance(pd.value, unit, defaults);
        } else if (d.kind === 'assumed') {
          pd.halfBand = defaults.assumed;
        } else {
          pd.halfBand = writtenTolerance(v, d.quantity, unit, defaults);
        }
      }
    }
    dimensions.push(pd);
    byName.set(d.name, pd);
  }

  // Newton starts: a derived length starts at the mean size of the given lengths.
  let sum = 0;
  let count = 0;
  for (const d of dimensions) {
    if (d.given && d.quantity === 'length' && Number.isFinite(d.value) && d.value !== 0) {
      sum += Math.abs(d.value);
      count++;
    }
  }
  const typical = count ? sum / count : 1;
  for (const d of dimensions) {
    if (!d.given && !Number.isFinite(d.start))
      d.start = d.quantity === 'length' ? typical : d.quantity === 'angle' ? 30 : 1;
  }

  const relations: PreparedRelation[] = [];
  const seenIds = new Set<string>();
  const resolve = (name: string) => {
    const d = byName.get(name);
    return d ? { index: d.index, quantity: d.quantity } : undefined;
  };
  for (const r of model.relations) {
    if (seenIds.has(r.id)) {
      errors.push({
        code: 'duplicate-name',
        relation: r.id,
        message: `relation id '${r.id}' is used more than once`,
      });
      continue;
    }
    seenIds.add(r.id);
    if (!r.enabled) continue;
    try {
      const compiled = bindRelation(parseRelation(r.expr), resolve, unit);
      if (compiled.vars.some((i) => dimensions[i].broken)) continue;
      relations.push({ id: r.id, expr: r.expr, compiled });
    } catch (e) {
      if (!(e instanceof ExpressionError)) throw e;
      errors.push({
        code: e.code,
        relation: r.id,
        message: e.message,
        ...(e.at !== undefined ? { at: e.at } : {}),
      });
    }
  }
  return { unit, dimensions, byName, relations, errors };
}

interface BlockFailure {
  error?: EngineError;
}

interface SolveContext {
  maxIterations: number;
  deadline: number;
  /** The time limit the deadline came from, ms (for the message of a block it stopped). */
  timeLimitMs: number;
}

const now = (): number => (typeof performance !== 'undefined' ? performance.now() : Date.now());

function converged(rels: readonly CompiledRelation[], x: Float64Array, F: Float64Array): boolean {
  for (let i = 0; i < rels.length; i++) if (!nearlyEqual(F[i], 0, rels[i].scale(x))) return false;
  return true;
}

function norm2(F: Float64Array): number {
  let s = 0;
  for (let i = 0; i < F.length; i++) s += F[i] * F[i];
  return Math.sqrt(s);
}

function residuals(rels: readonly CompiledRelation[], x: Float64Array, F: Float64Array): void {
  for (let i = 0; i < rels.length; i++) F[i] = rels[i].residual(x);
}

function describeNotFinite(
  ids: string[],
  rels: readonly CompiledRelation[],
  x: Float64Array,
): EngineError | null {
  for (let i = 0; i < rels.length; i++) {
    const d = rels[i].diagnose(x);
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
  for (let i = 0; i < n; i++) neg[i] = -lin.F[i];
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
  const n = rels.length;
  for (const rel of rels)
    for (const v of rel.vars) if (colOf[v] < 0 && !Number.isFinite(x[v])) return {}; // upstream failed
  const what = () => describeBlock(ids, unknowns, names);
  const linear = rels.every((r) => r.affine !== null || r.degreeIn((gi) => colOf[gi] >= 0) <= 1);
  const F = new Float64Array(n);

  // Fast path: one affine relation, one unknown.
  if (n === 1 && rels[0].affine) {
    const rel = rels[0];
    const { a, c } = rel.affine!;
    let coef = 0;
    let rest = c;
    for (let j = 0; j < rel.vars.length; j++) {
      if (colOf[rel.vars[j]] >= 0) coef += a[j];
      else rest += a[j] * x[rel.vars[j]];
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
    x[unknowns[0]] = -rest / coef;
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
    for (let c = 0; c < n; c++) neg[c] = -lin.F[c];
    for (let pass = 0; pass < 3; pass++) {
      const d = factor.solve(neg);
      for (let c = 0; c < n; c++) x[unknowns[c]] += d[c];
      residuals(rels, x, F);
      if (converged(rels, x, F)) return null;
      for (let c = 0; c < n; c++) neg[c] = -F[c];
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
      for (let c = 0; c < n; c++)
        x[unknowns[c]] += 1e-3 * (Math.abs(x[unknowns[c]]) + 1) * (c % 2 ? -1 : 1);
      continue;
    }
    const base = unknowns.map((u) => x[u]);
    let lambda = 1;
    let accepted = false;
    while (lambda > 1e-8) {
      for (let c = 0; c < n; c++) x[unknowns[c]] = base[c] + lambda * d[c];
      residuals(rels, x, trial);
      const tn = norm2(trial);
      if (Number.isFinite(tn) && tn < (1 - 1e-4 * lambda) * lastNorm) {
        accepted = true;
        break;
      }
      lambda /= 2;
    }
    if (!accepted) {
      for (let c = 0; c < n; c++) x[unknowns[c]] = base[c];
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
  const base = unknowns.map((u) => x[u]);
  for (let c = 0; c < n; c++) x[unknowns[c]] = base[c] + d[c];
  residuals(rels, x, trial);
  if (!(norm2(trial) <= before)) for (let c = 0; c < n; c++) x[unknowns[c]] = base[c];
}

interface SolvedBlock {
  relations: CompiledRelation[];
  ids: string[];
  relationIndices: number[];
  unknowns: number[];
}

/** Everything about a solved model that the result and a re-solve (Monte Carlo) need. */
interface Solution {
  prep: PreparedModel;
  structure: StructureResult;
  unknownDims: number[];
  blocks: Array<SolvedBlock & { ok: boolean }>;
  x: Float64Array;
  errors: EngineError[];
}

function solveStructure(prep: PreparedModel, options: SolveOptions): Solution {
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
    for (const v of r.compiled.vars) if (unknownOf[v] >= 0) e.push(unknownOf[v]);
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
  const errors: EngineError[] = [];
  const blocks: Solution['blocks'] = [];
  for (const b of structure.blocks) {
    const relations = b.relations.map((r) => prep.relations[r].compiled);
    const ids = b.relations.map((r) => prep.relations[r].id);
    const unknowns = b.unknowns.map((u) => unknownDims[u]);
    unknowns.forEach((u, c) => (colOf[u] = c));
    const failure = solveBlock(ids, relations, unknowns, names, x, colOf, ctx);
    unknowns.forEach((u) => (colOf[u] = -1));
    if (failure) {
      for (const u of unknowns) x[u] = NaN;
      if (failure.error) errors.push(failure.error);
    }
    blocks.push({ relations, ids, relationIndices: b.relations, unknowns, ok: !failure });
  }
  for (const u of structure.underdetermined.flatMap((g) => g.unknowns)) x[unknownDims[u]] = NaN;
  return { prep, structure, unknownDims, blocks, x, errors };
}

/** Re-solves the blocks in place (after given values changed); false if any failed. */
function resolveBlocks(sol: Solution, x: Float64Array, blocks: Solution['blocks']): boolean {
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

function schemaErrors(
  error: { issues: Array<{ path: PropertyKey[]; message: string }> },
  input: unknown,
): EngineError[] {
  const raw = input as {
    dimensions?: Array<{ name?: unknown }>;
    relations?: Array<{ id?: unknown }>;
  } | null;
  return error.issues.map((issue) => {
    const [head, idx, ...rest] = issue.path;
    const where = issue.path.map(String).join('.');
    const e: EngineError = {
      code: 'schema',
      message: where ? `${where}: ${issue.message}` : issue.message,
    };
    if (head === 'dimensions' && typeof idx === 'number') {
      const name = raw?.dimensions?.[idx]?.name;
      e.dimension = typeof name === 'string' ? name : `#${idx}`;
    }
    if (head === 'relations' && typeof idx === 'number') {
      const id = raw?.relations?.[idx]?.id;
      e.relation = typeof id === 'string' ? id : `#${idx}`;
    }
    void rest;
    return e;
  });
}

function emptyResult(errors: EngineError[]): SolveResult {
  return {
    status: 'invalid',
    units: null,
    values: {},
    contradictions: [],
    checks: [],
    undetermined: [],
    needs: 0,
    openGroups: [],
    errors,
  };
}

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
  const sol = solveStructure(prep, options);
  const { structure, unknownDims, blocks, x } = sol;
  const dims = prep.dimensions;
  const errors = [...prep.errors, ...sol.errors];
  const isGiven = new Uint8Array(dims.length);
  const halfBand = new Float64Array(dims.length);
  const shift = new Float64Array(dims.length);
  for (const d of dims) {
    if (d.given && !d.broken) isGiven[d.index] = 1;
    halfBand[d.index] = d.halfBand;
    shift[d.index] = d.shift;
  }

  const okBlocks = blocks.filter((b) => b.ok);
  const sens: Array<Sensitivity | undefined> = options.valuesOnly
    ? new Array(dims.length)
    : propagateSensitivities(okBlocks, x, isGiven);

  // Traces: the relations (in solving order) and given inputs behind each derived value.
  const blockOf = new Int32Array(dims.length).fill(-1);
  blocks.forEach((b, i) => b.unknowns.forEach((u) => (blockOf[u] = i)));
  const relSets: Array<number[] | undefined> = new Array(blocks.length);
  const inputSets: Array<number[] | undefined> = new Array(blocks.length);
  // Unions by stamping (no Sets): each call bumps `tick`, an index is new if its stamp differs.
  const relStamp = new Int32Array(prep.relations.length);
  const inStamp = new Int32Array(dims.length);
  const blockStamp = new Int32Array(blocks.length + 1);
  let tick = 0;
  const traceOf = (rels: readonly CompiledRelation[], own: number[], selfBlock: number) => {
    tick++;
    const rs: number[] = [];
    const ins: number[] = [];
    for (const rel of rels) {
      for (const v of rel.vars) {
        if (isGiven[v]) {
          if (inStamp[v] !== tick) {
            inStamp[v] = tick;
            ins.push(v);
          }
          continue;
        }
        const bi = blockOf[v];
        if (bi < 0 || bi === selfBlock || !relSets[bi] || blockStamp[bi] === tick) continue;
        blockStamp[bi] = tick;
        for (const r of relSets[bi]!) {
          if (relStamp[r] !== tick) {
            relStamp[r] = tick;
            rs.push(r);
          }
        }
        for (const g of inputSets[bi]!) {
          if (inStamp[g] !== tick) {
            inStamp[g] = tick;
            ins.push(g);
          }
        }
      }
    }
    for (const r of own) {
      if (relStamp[r] !== tick) {
        relStamp[r] = tick;
        rs.push(r);
      }
    }
    return { rs, ins };
  };
  if (!options.valuesOnly) {
    blocks.forEach((b, i) => {
      if (!b.ok) return;
      const t = traceOf(b.relations, b.relationIndices, i);
      relSets[i] = t.rs;
      inputSets[i] = t.ins;
    });
  }
  const order = new Int32Array(prep.relations.length).fill(-1);
  let k = 0;
  for (const b of blocks) for (const r of b.relationIndices) order[r] = k++;
  for (const r of structure.redundant) order[r] = k++;
  const sortRels = (s: readonly number[]) => [...s].sort((p, q) => order[p] - order[q]);

  // Redundant relations: residuals and their total derivatives.
  const redundant: RedundantRelation[] = [];
  for (const r of options.valuesOnly ? [] : structure.redundant) {
    const pr = prep.relations[r];
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
    const t = traceOf([rel], [r], -1);
    redundant.push({
      id: pr.id,
      relations: sortRels(t.rs).map((i) => prep.relations[i].id),
      residual,
      scale: rel.scale(x),
      gradient,
    });
  }
  const { contradictions, checks } = reconcileRedundant({
    redundant,
    halfBand,
    shift,
    names: dims.map((d) => d.name),
    protectedValue: (i) => dims[i].kind === 'asbuilt',
  });

  // Values. The unknowns of one block share one trace object.
  const traces: Array<ValueTrace | undefined> = new Array(blocks.length);
  // Trace entries are shared between traces (one object per relation and per input).
  const relEntry: Array<{ id: string; expr: string } | undefined> = new Array(
    prep.relations.length,
  );
  const inputEntry: Array<{ name: string; value: number } | undefined> = new Array(dims.length);
  const blockTrace = (bi: number): ValueTrace =>
    (traces[bi] ??= {
      relations: sortRels(relSets[bi]!).map(
        (i) => (relEntry[i] ??= { id: prep.relations[i].id, expr: prep.relations[i].expr }),
      ),
      inputs: [...inputSets[bi]!]
        .sort((p, q) => p - q)
        .map((i) => (inputEntry[i] ??= { name: dims[i].name, value: dims[i].value })),
    });
  const values: Record<string, ValueResult> = {};
  for (const d of dims) {
    const base = { kind: d.kind, quantity: d.quantity };
    if (d.given) {
      const v: ValueResult = {
        value: d.broken ? null : d.value,
        worstCase: d.broken ? null : d.halfBand,
        rss: d.broken ? null : d.halfBand,
        ...base,
        from: [],
        contributors: [],
        trace: { relations: [], inputs: [] },
      };
      if (d.tolPlus !== undefined && d.tolMinus !== undefined && d.shift !== 0) {
        v.tolPlus = d.tolPlus;
        v.tolMinus = d.tolMinus;
        v.mean = d.value + d.shift;
      }
      values[d.name] = v;
      continue;
    }
    const bi = blockOf[d.index];
    const s: Sensitivity | undefined = sens[d.index];
    if (bi >= 0 && blocks[bi].ok && options.valuesOnly && Number.isFinite(x[d.index])) {
      values[d.name] = {
        value: x[d.index],
        worstCase: null,
        rss: null,
        ...base,
        from: blocks[bi].ids,
        contributors: [],
        trace: { relations: [], inputs: [] },
      };
      continue;
    }
    if (bi < 0 || !blocks[bi].ok || !s || !Number.isFinite(x[d.index])) {
      values[d.name] = {
        value: null,
        worstCase: null,
        rss: null,
        ...base,
        from: bi >= 0 ? blocks[bi].ids : [],
        contributors: [],
        trace: { relations: [], inputs: [] },
      };
      continue;
    }
    const st = stackUp(s, halfBand, shift);
    const v: ValueResult = {
      value: x[d.index],
      worstCase: st.worstCase,
      rss: st.rss,
      ...base,
      from: blocks[bi].ids,
      contributors: st.terms.map((t) => ({
        name: dims[t.index].name,
        sensitivity: t.sensitivity,
        share: t.share,
      })),
      trace: blockTrace(bi),
    };
    if (st.meanShift !== 0) {
      v.mean = x[d.index] + st.meanShift;
      v.tolPlus = st.meanShift + st.worstCase;
      v.tolMinus = st.worstCase - st.meanShift;
    }
    values[d.name] = v;
  }

  const undetermined = structure.underdetermined.flatMap((g) =>
    g.unknowns.map((u) => dims[unknownDims[u]].name),
  );
  const openGroups = structure.underdetermined.map((g) => ({
    unknowns: g.unknowns.map((u) => dims[unknownDims[u]].name),
    needs: g.needs,
    measure: g.measure.map((u) => dims[unknownDims[u]].name),
    relations: g.relations.map((r) => prep.relations[r].id),
  }));

  const status: SolveStatus = errors.length
    ? 'invalid'
    : contradictions.length
      ? 'contradictory'
      : structure.needs > 0
        ? 'incomplete'
        : 'solved';

  const result: SolveResult = {
    status,
    units: prep.unit,
    values,
    contradictions,
    checks,
    undetermined,
    needs: structure.needs,
    openGroups,
    errors,
  };

  if (options.monteCarlo && options.monteCarlo.samples > 0) {
    const mc = options.monteCarlo;
    const wanted = mc.values
      ? mc.values
          .map((n) => prep.byName.get(n))
          .filter((d): d is PreparedDimension => !!d && !d.given)
      : dims.filter((d) => !d.given);
    const targets = wanted
      .filter((d) => Number.isFinite(x[d.index]))
      .map((d) => ({ name: d.name, index: d.index }));
    // Only the blocks the targets depend on are re-solved per sample.
    const need = new Uint8Array(blocks.length);
    const stack = targets.map((t) => blockOf[t.index]).filter((b) => b >= 0);
    while (stack.length) {
      const b = stack.pop()!;
      if (need[b]) continue;
      need[b] = 1;
      for (const rel of blocks[b].relations)
        for (const v of rel.vars) if (blockOf[v] >= 0 && !need[blockOf[v]]) stack.push(blockOf[v]);
    }
    const neededBlocks = blocks.filter((_, i) => need[i]);
    const givens = dims
      .filter((d) => d.given && !d.broken && d.halfBand > 0)
      .map((d) => ({ index: d.index, mean: d.value + d.shift, sigma: d.halfBand / 3 }));
    result.monteCarlo = runMonteCarlo({
      samples: Math.floor(mc.samples),
      seed: mc.seed ?? 1,
      bins: mc.bins ?? 20,
      givens,
      targets,
      x0: x,
      resolve: (xs) => resolveBlocks(sol, xs, neededBlocks),
      onProgress: mc.onProgress,
    });
  }
  return result;
}
