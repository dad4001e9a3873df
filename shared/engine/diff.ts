/**
 * What changed between two models, and which solved values moved: the history entry of a save,
 * the comparison of two revisions, and the "someone else saved first" view.
 */
import type { FairsheetModelInput } from './model';
import { TOLERANCES } from './numeric';
import type { SolveResult } from './result';

type DimensionInput = FairsheetModelInput['dimensions'][number];
type RelationInput = NonNullable<FairsheetModelInput['relations']>[number];
type PartInput = NonNullable<FairsheetModelInput['parts']>[number];
type FeatureInput = NonNullable<FairsheetModelInput['features']>[number];

export interface FieldChange {
  field: string;
  from: unknown;
  to: unknown;
}

export interface ItemChange<T> {
  key: string;
  change: 'added' | 'removed' | 'changed';
  before?: T;
  after?: T;
  fields: FieldChange[];
}

export interface ModelDiff {
  units?: { from: string; to: string };
  /** The implied-tolerance rules, when they changed (absent from diffs recorded before them). */
  defaults?: { from: FairsheetModelInput['defaults']; to: FairsheetModelInput['defaults'] };
  dimensions: ItemChange<DimensionInput>[];
  relations: ItemChange<RelationInput>[];
  parts: ItemChange<PartInput>[];
  features: ItemChange<FeatureInput>[];
}

export interface ValueMove {
  name: string;
  from: number | null;
  to: number | null;
  /** to − from; null when either side is unknown. */
  delta: number | null;
}

/**
 * Whether two JSON values say the same, whatever the order of their keys: a model read back
 * from PostgreSQL's jsonb has its keys in jsonb's own order (shorter keys first), not the order
 * it was written in, so comparing JSON text would call every nested object changed. A key
 * holding `undefined` counts as absent, as in JSON.
 *
 * @example sameJson({ type: 'circle', pcd: 1 }, { pcd: 1, type: 'circle' }) // true
 */
export function sameJson(a: unknown, b: unknown): boolean {
  if (a === b) return true;
  if (typeof a !== 'object' || typeof b !== 'object' || a === null || b === null) return false;
  if (Array.isArray(a) || Array.isArray(b)) {
    if (!Array.isArray(a) || !Array.isArray(b) || a.length !== b.length) return false;
    return a.every((v, i) => sameJson(v, b[i]));
  }
  const x = a as Record<string, unknown>;
  const y = b as Record<string, unknown>;
  const keys = (o: Record<string, unknown>) => Object.keys(o).filter((k) => o[k] !== undefined);
  const kx = keys(x);
  return kx.length === keys(y).length && kx.every((k) => sameJson(x[k], y[k]));
}

function fieldChanges(before: object, after: object): FieldChange[] {
  const a = before as Record<string, unknown>;
  const b = after as Record<string, unknown>;
  const keys = [...new Set([...Object.keys(a), ...Object.keys(b)])].sort();
  return keys.filter((k) => !sameJson(a[k], b[k])).map((k) => ({ field: k, from: a[k], to: b[k] }));
}

/**
 * What changed in a list of items matched by `key`: added, removed, or changed field by field.
 * The model's dimensions and relations, and a sheet's pins and measurements, are diffed so.
 *
 * @example diffItems([{ id: 'p1', x: 1 }], [{ id: 'p1', x: 2 }], (p) => p.id)[0].fields // [{ field: 'x', from: 1, to: 2 }]
 */
export function diffItems<T extends object>(
  before: T[],
  after: T[],
  key: (item: T) => string,
): ItemChange<T>[] {
  const old = new Map(before.map((item) => [key(item), item]));
  const now = new Map(after.map((item) => [key(item), item]));
  const changes: ItemChange<T>[] = [];
  for (const [k, item] of old) {
    if (!now.has(k)) changes.push({ key: k, change: 'removed', before: item, fields: [] });
  }
  for (const [k, item] of now) {
    const prior = old.get(k);
    if (!prior) changes.push({ key: k, change: 'added', after: item, fields: [] });
    else {
      const fields = fieldChanges(prior, item);
      if (fields.length)
        changes.push({ key: k, change: 'changed', before: prior, after: item, fields });
    }
  }
  return changes;
}

/**
 * Dimensions are matched by name and relations by id.
 *
 * @example diffModels(a, b).dimensions // [{ key: 'overall', change: 'changed', fields: [{ field: 'value', from: '6 1/4', to: '6 3/8' }] }]
 */
export function diffModels(before: FairsheetModelInput, after: FairsheetModelInput): ModelDiff {
  return {
    ...(before.units !== after.units ? { units: { from: before.units, to: after.units } } : {}),
    ...(sameJson(before.defaults, after.defaults)
      ? {}
      : { defaults: { from: before.defaults, to: after.defaults } }),
    dimensions: diffItems(before.dimensions, after.dimensions, (d) => d.name),
    relations: diffItems(before.relations ?? [], after.relations ?? [], (r) => r.id),
    parts: diffItems(before.parts ?? [], after.parts ?? [], (p) => p.id),
    features: diffItems(before.features ?? [], after.features ?? [], (f) => f.id),
  };
}

export function isEmptyDiff(diff: ModelDiff): boolean {
  return (
    !diff.units &&
    !diff.defaults &&
    diff.dimensions.length === 0 &&
    diff.relations.length === 0 &&
    (diff.parts?.length ?? 0) === 0 &&
    (diff.features?.length ?? 0) === 0
  );
}

const show = (v: unknown) =>
  v === undefined ? '—' : typeof v === 'string' ? v : JSON.stringify(v);

const FIELD_WORDS: Readonly<Record<string, string>> = {
  tol: 'tolerance',
  tolMinus: 'minus tolerance',
  tolPlus: 'plus tolerance',
  expr: 'expression',
  drillSet: 'drill set',
  drillDepth: 'drill depth',
  pcd: 'pitch circle',
  startAngle: 'start angle',
};

/**
 * A model field as the history says it: `tol` reads "tolerance".
 *
 * @example fieldWords('tolPlus') // 'plus tolerance'
 */
export function fieldWords(field: string): string {
  return FIELD_WORDS[field] ?? field;
}

/**
 * One line for a history list, e.g. "overall 6 1/4 → 6 3/8; added slot; r2 edited".
 *
 * @example summariseDiff(diffModels(a, b)) // 'overall value 6 1/4 → 6 3/8'
 */
export function summariseDiff(diff: ModelDiff, limit = 4): string {
  const parts: string[] = [];
  if (diff.units) parts.push(`units ${diff.units.from} → ${diff.units.to}`);
  if (diff.defaults) parts.push('tolerance defaults edited');
  for (const d of diff.dimensions) {
    if (d.change === 'added') parts.push(`added ${d.key}`);
    else if (d.change === 'removed') parts.push(`removed ${d.key}`);
    else {
      const [f, ...more] = d.fields;
      parts.push(
        f && more.length === 0
          ? `${d.key} ${fieldWords(f.field)} ${show(f.from)} → ${show(f.to)}`
          : `${d.key} edited`,
      );
    }
  }
  for (const r of diff.relations) {
    parts.push(
      r.change === 'changed' ? `relation ${r.key} edited` : `${r.change} relation ${r.key}`,
    );
  }
  for (const p of diff.parts ?? []) {
    parts.push(p.change === 'changed' ? `part ${p.key} edited` : `${p.change} part ${p.key}`);
  }
  for (const f of diff.features ?? []) {
    parts.push(f.change === 'changed' ? `feature ${f.key} edited` : `${f.change} feature ${f.key}`);
  }
  if (!parts.length) return 'no change';
  const shown = parts.slice(0, limit).join('; ');
  return parts.length > limit ? `${shown}; and ${parts.length - limit} more` : shown;
}

/**
 * Solved values whose value differs between two results by more than `tolerance`.
 *
 * @example movedValues(before, after) // [{ name: 'slot', from: 2.5, to: 2.625, delta: 0.125 }]
 */
export function movedValues(
  before: SolveResult,
  after: SolveResult,
  tolerance: number = TOLERANCES.moved,
): ValueMove[] {
  const names = [...new Set([...Object.keys(before.values), ...Object.keys(after.values)])].sort();
  const moves: ValueMove[] = [];
  for (const name of names) {
    const a = before.values[name]?.value ?? null;
    const b = after.values[name]?.value ?? null;
    if (a === null && b === null) continue;
    if (a !== null && b !== null && Math.abs(a - b) <= tolerance) continue;
    moves.push({ name, from: a, to: b, delta: a !== null && b !== null ? b - a : null });
  }
  return moves;
}

/**
 * Replays item changes onto a list (see `applyDiff`): added items are put in (or replace one of
 * the same key), removed ones taken out, changed ones set field by field.
 *
 * @example applyItems(pins, diffItems(base, mine, (p) => p.id), (p) => p.id)
 */
export function applyItems<T extends object>(
  items: T[],
  changes: ItemChange<T>[],
  key: (item: T) => string,
): T[] {
  const out = items.map((item) => ({ ...item }));
  for (const c of changes) {
    const at = out.findIndex((item) => key(item) === c.key);
    if (c.change === 'removed') {
      if (at >= 0) out.splice(at, 1);
    } else if (c.change === 'added') {
      if (at >= 0) out[at] = { ...c.after! };
      else out.push({ ...c.after! });
    } else if (at >= 0) {
      const target = out[at] as Record<string, unknown>;
      for (const f of c.fields) {
        if (f.to === undefined) delete target[f.field];
        else target[f.field] = f.to;
      }
    } else {
      out.push({ ...c.after! });
    }
  }
  return out;
}

/**
 * Replays a diff onto another model: how an edit made against an old revision is re-applied
 * on top of someone else's newer save. Field-level, so edits to different fields of the same
 * dimension both survive; where both changed one field, the replayed edit wins.
 *
 * @example applyDiff(theirs, diffModels(base, mine))
 */
export function applyDiff(model: FairsheetModelInput, diff: ModelDiff): FairsheetModelInput {
  return {
    ...model,
    ...(diff.units ? { units: diff.units.to as FairsheetModelInput['units'] } : {}),
    ...(diff.defaults ? { defaults: diff.defaults.to } : {}),
    dimensions: applyItems(model.dimensions, diff.dimensions, (d) => d.name),
    relations: applyItems(model.relations ?? [], diff.relations, (r) => r.id),
    parts: applyItems(model.parts ?? [], diff.parts ?? [], (p) => p.id),
    features: applyItems(model.features ?? [], diff.features ?? [], (f) => f.id),
  };
}
