/**
 * Reading a checked model: values to the model unit, tolerances (given or implied), relations
 * parsed, checked and compiled, and a schema's refusals as the result's errors. Problems are
 * collected, not thrown.
 */
import {
  ExpressionError,
  RESERVED_NAMES,
  bindRelation,
  parseRelation,
  type CompiledRelation,
} from '../expression';
import type { ModelUnit } from '../length';
import {
  impliedTolerance,
  scaledTolerance,
  toleranceDefaults,
  type DimensionKind,
  type FairsheetModel,
  type QuantityKind,
  type ToleranceDefaults,
} from '../model';
import { parseQuantity, quantityIn, QuantityError, type Quantity } from '../quantity';
import type { SolveError, SolveResult } from '../result';

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
  errors: SolveError[];
}

function badValue(
  pd: PreparedDimension,
  errors: SolveError[],
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
  const errors: SolveError[] = [];
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
      // resolve answered with indices of `dimensions`.
      if (compiled.vars.some((i) => dimensions[i]!.broken)) continue;
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

export function schemaErrors(
  error: { issues: Array<{ path: PropertyKey[]; message: string }> },
  input: unknown,
): SolveError[] {
  const raw = input as {
    dimensions?: Array<{ name?: unknown }>;
    relations?: Array<{ id?: unknown }>;
  } | null;
  return error.issues.map((issue) => {
    const [head, idx, ...rest] = issue.path;
    const where = issue.path.map(String).join('.');
    const e: SolveError = {
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

export function emptyResult(errors: SolveError[]): SolveResult {
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
