/**
 * Features of parts, evaluated for the workshop: where every hole is from its part's datum
 * (patterns expanded to one row per hole), how well each position is known, what it rests on,
 * and what makes it (tap drill, clearance drill, stock drill, spindle speed).
 *
 * Positions are not computed on the side: each feature coordinate (and each pattern's pitch
 * circle or pitch, and each expanded hole) becomes a hidden derived dimension with one relation
 * `hidden = <expression>` in a copy of the model, and the copy is solved once. So the value,
 * its worst case and RSS stack-up, its contributors and its trace come from the same engine as
 * every other derived dimension, and a position written over an undetermined value is itself
 * reported as undetermined.
 *
 * Hidden names use a prefix that no name in the model starts with (`__feat_`, lengthened with
 * `_` until it is unique), so they cannot clash with the builder's names; they never appear
 * in the answer.
 */
import { ExpressionError, parseExpression, type ExprNode } from './expression';
import { drillByLabel, nearestDrill, type DrillSetName, type StockDrill } from './drills';
import {
  modelSchema,
  type DimensionKind,
  type FairsheetModel,
  type ModelFeature,
  type ModelPart,
} from './model';
import { convertLength, MM_PER_IN, type ModelUnit } from './length';
import { parseQuantity, quantityIn } from './quantity';
import type { Contributor, SolveStatus } from './result';
import { conservativeSurfaceSpeed, materialSpeeds, spindleSpeedRpm } from './shop-math';
import { prepareModel, solvePrepared, type SolveOptions } from './solve';
import {
  clearanceFor,
  percentThreadFor,
  tapDrillFor,
  threadByDesignation,
  ThreadError,
  drillSetWords,
  type DrillRecommendation,
  type ThreadSeries,
  type ThreadSpec,
} from './threads';

/** Given kinds a position can rest on. */
export type GivenKind = Exclude<DimensionKind, 'derived'>;

/**
 * Where a coordinate comes from: the kind of the given dimension it names directly, `derived`
 * for an expression (or a derived name), `datum` for a literal 0 (the datum itself), and
 * `assumed` for any other number typed on the feature (the builder's choice, not the drawing's).
 */
export type Provenance = DimensionKind | 'datum';

const GIVEN_ORDER: readonly GivenKind[] = ['stated', 'scaled', 'assumed', 'asbuilt'];

/** One evaluated length (a coordinate, a pitch circle, a depth), in the model unit. */
export interface FeatureLength {
  /** As written on the feature, or a description for an expanded pattern hole. */
  readonly expr: string;
  readonly value: number | null;
  /** ± worst case Σ|sᵢ|·tᵢ; 0 for a literal. */
  readonly worstCase: number | null;
  /** ± RSS √Σ(sᵢ·tᵢ)². */
  readonly rss: number | null;
  readonly provenance: Provenance;
  /** The kinds of the given values it rests on, in the order stated, scaled, assumed, as-built. */
  readonly restsOn: readonly GivenKind[];
  /** The given dimensions it rests on (user names only), largest share first. */
  readonly contributors: readonly Contributor[];
}

/** One row of the ordinate table: a single hole or feature position. */
export interface FeatureRow {
  readonly feature: string;
  readonly part: string;
  /** Hole number within a pattern (0-based), or null for a single feature. */
  readonly index: number | null;
  /** `label`, or `label 3/6` for a pattern hole. */
  readonly label: string;
  readonly x: FeatureLength;
  readonly y: FeatureLength;
}

export type FeatureIssueCode =
  | 'schema'
  | 'duplicate-id'
  | 'unknown-part'
  | 'unknown-material'
  | 'unknown-thread'
  | 'missing-thread'
  | 'unreadable-drill'
  | 'expression'
  | 'unknown-name'
  | 'unit-mismatch'
  | 'unsolved'
  | 'pressure';

/** A problem with one feature (or part), reported beside it, never thrown. */
export interface FeatureIssue {
  readonly code: FeatureIssueCode;
  readonly message: string;
  readonly feature?: string;
  readonly part?: string;
  /** Which field: `x`, `y`, `pcd`, `pitch`, `depth`, `width`, `length`, `thread`, `drill`. */
  readonly field?: string;
  /** Character offset in the field's expression. */
  readonly at?: number;
  /** For a pressure warning: the scaled or assumed dimensions the position rests on. */
  readonly names?: readonly string[];
}

export interface FeatureThread {
  readonly designation: string;
  readonly series: ThreadSeries;
  readonly majorMm: number;
  readonly pitchMm: number;
  readonly tpi?: number;
  readonly source: string;
}

export interface FeatureTap {
  readonly targetPercent: number;
  /** The drill the % rule gives before rounding to a stock size. */
  readonly theoreticalMm: number;
  /** Nearest stock drill in the part's drill set, and the % thread it really cuts. */
  readonly stock: StockDrill & { readonly percentThread: number };
  /** The series' published chart drill, where one is held. */
  readonly published?: DrillRecommendation & { readonly percentThread: number };
  readonly rule: string;
  readonly source: string;
}

export interface FeatureClearance {
  readonly fit: 'close' | 'free';
  readonly close: DrillRecommendation;
  readonly free: DrillRecommendation;
  /** The smallest stock drill in the part's set at least as large as the chosen fit. */
  readonly stock: StockDrill;
  readonly source: string;
}

/** The drill that makes the hole (tap drill, clearance drill or the named drill). */
export interface FeatureDrill {
  readonly label: string;
  readonly mm: number;
  readonly inch: number;
  /** `tap`, `clearance` or `named` (the drill written on the feature). */
  readonly role: 'tap' | 'clearance' | 'named';
  /** For a tapped hole: the % thread this drill cuts. */
  readonly percentThread?: number;
  /** The written size is not a stock drill of the part's set: the nearest stock one. */
  readonly nearestStock?: StockDrill;
  readonly source: string;
}

/** Spindle speed for the drill: N = 1000·Vc/(π·D), HSS, the low end of the material's range. */
export interface FeatureSpeed {
  readonly rpm: number;
  readonly vcMPerMin: number;
  readonly range: { readonly min: number; readonly max: number };
  readonly material: string;
  readonly formula: string;
  readonly source: string;
}

export interface FeaturePattern {
  readonly type: 'circle' | 'row';
  readonly count: number;
  /** Pitch circle diameter (circle) or pitch (row). */
  readonly size: FeatureLength;
  /** Start angle (circle) or direction (row), degrees counter-clockwise from +X. */
  readonly angleDeg: number;
}

export interface FeatureResult {
  readonly id: string;
  readonly part: string;
  readonly kind: ModelFeature['kind'];
  readonly label: string;
  /** The written position: the hole, a pattern's centre (circle) or first hole (row). */
  readonly x: FeatureLength;
  readonly y: FeatureLength;
  readonly pattern?: FeaturePattern;
  readonly thread?: FeatureThread;
  readonly tap?: FeatureTap;
  readonly clearance?: FeatureClearance;
  readonly drill?: FeatureDrill;
  readonly speed?: FeatureSpeed;
  readonly depth: 'through' | FeatureLength;
  readonly width?: FeatureLength;
  readonly length?: FeatureLength;
  readonly note?: string;
  /** One per hole (a single feature has one). */
  readonly rows: readonly FeatureRow[];
  readonly errors: readonly FeatureIssue[];
  readonly warnings: readonly FeatureIssue[];
}

export interface PartResult {
  readonly id: string;
  readonly name: string;
  readonly material: string;
  /** The material's name in the speeds table (undefined when the material is not held). */
  readonly materialName?: string;
  readonly quantity: number;
  readonly stack: string | null;
  readonly pressure: boolean;
  readonly drillSet: ModelPart['drillSet'];
  readonly width?: FeatureLength;
  readonly height?: FeatureLength;
  readonly notes?: string;
  readonly features: readonly string[];
  readonly errors: readonly FeatureIssue[];
}

/** What the shop machines in one set-up: a stack of parts drilled together, or one part. */
export interface SheetGroup {
  /** The stack id, or the part id for a part on its own. */
  readonly id: string;
  readonly stack: string | null;
  readonly parts: readonly string[];
  readonly pressure: boolean;
  /** Every hole of the group's features, in readout order (see `READOUT_ORDER`). */
  readonly rows: readonly FeatureRow[];
  readonly features: readonly string[];
  /** Features of pressure-bearing parts resting on scaled or assumed values: for the inspector. */
  readonly pressureFeatures: readonly string[];
}

export interface FeaturesResult {
  readonly units: ModelUnit | null;
  /** The status of the model's own solve (contradictions or gaps elsewhere still show). */
  readonly status: SolveStatus;
  readonly parts: readonly PartResult[];
  readonly features: readonly FeatureResult[];
  readonly groups: readonly SheetGroup[];
  /** Every error and warning of every part and feature, in model order. */
  readonly issues: readonly FeatureIssue[];
  /** How rows are ordered, in words for the shop sheet. */
  readonly order: string;
}

/**
 * Rows go in the order a digital readout is best worked from one direction: Y ascending, then
 * X ascending along each Y (every move in +X along a line, every new line a move in +Y), so
 * each axis is always approached the same way and backlash and table lift stay on one side.
 * Positions equal within 1e-6 of the model unit count as the same line. Unsolved positions last.
 */
export const READOUT_ORDER =
  'Rows run by Y ascending, then X ascending: approach every position from −X and −Y.';

const SAME_LINE = 1e-6;

/**
 * Sorts rows into readout order (see `READOUT_ORDER`); a new array.
 *
 * @example sortForReadout(rows).map((r) => r.label) // ['A', 'B', …]
 */
export function sortForReadout<T extends Pick<FeatureRow, 'x' | 'y'>>(rows: readonly T[]): T[] {
  const key = (v: number | null) => (v === null ? Number.POSITIVE_INFINITY : v);
  return [...rows].sort((a, b) => {
    const dy = key(a.y.value) - key(b.y.value);
    if (Number.isNaN(dy) || Math.abs(dy) > SAME_LINE) return Number.isNaN(dy) ? 0 : dy;
    const dx = key(a.x.value) - key(b.x.value);
    return Number.isNaN(dx) ? 0 : dx;
  });
}

/**
 * The dimension names an expression uses, in order of first use; throws ExpressionError (with
 * the offset) for a syntax error or a forbidden construct, like `parseExpression`.
 *
 * @example expressionNames('horn1_x - horn_gap / 2') // ['horn1_x', 'horn_gap']
 */
export function expressionNames(text: string): string[] {
  return [...namesOf(parseExpression(text), new Set<string>())];
}

// ---------------------------------------------------------------------------------------------

const DRILL_FORMULA = 'N = 1000·Vc/(π·D), Vc in m/min, D in mm';
// N = 1000·Vc/(π·D) [published] incoherency.co.uk/jesref/lathe-speeds.html (check-values §9).
const SPEED_SOURCE = 'N = 1000·Vc/(π·D)';

function namesOf(node: ExprNode, into: Set<string>): Set<string> {
  switch (node.t) {
    case 'sym':
      into.add(node.name);
      break;
    case 'neg':
      namesOf(node.a, into);
      break;
    case 'bin':
      namesOf(node.a, into);
      namesOf(node.b, into);
      break;
    case 'call':
      node.args.forEach((a) => namesOf(a, into));
      break;
    default:
      break;
  }
  return into;
}

/** `+ name * 0.5`, `- name`, or '' for a zero coefficient; constants written to full precision. */
function term(coefficient: number, name: string): string {
  if (coefficient === 0) return '';
  const sign = coefficient < 0 ? '-' : '+';
  const magnitude = Math.abs(coefficient);
  return magnitude === 1 ? ` ${sign} ${name}` : ` ${sign} ${name} * ${magnitude.toPrecision(17)}`;
}

/** cos and sin of degrees, exact at quarter turns (so a hole at 90° has x offset 0, not 6e-17). */
function cosSin(deg: number): [number, number] {
  const d = ((deg % 360) + 360) % 360;
  if (d === 0) return [1, 0];
  if (d === 90) return [0, 1];
  if (d === 180) return [-1, 0];
  if (d === 270) return [0, -1];
  const r = (d * Math.PI) / 180;
  return [Math.cos(r), Math.sin(r)];
}

interface Slot {
  /** Hidden dimension name. */
  readonly name: string;
  readonly expr: string;
  /** Given kind of a bare given name, `derived` otherwise. */
  readonly direct: DimensionKind | null;
  /** Written as a number (no names). */
  readonly literal: boolean;
  readonly feature?: string;
  readonly part?: string;
  readonly field: string;
  /** False when the expression was refused before solving. */
  readonly ok: boolean;
}

function drillFromText(
  text: string,
  units: ModelUnit,
): { label: string; mm: number; inch: number; stock?: StockDrill } | undefined {
  const stock = drillByLabel(text);
  if (stock) return { label: stock.label, mm: stock.mm, inch: stock.inch, stock };
  try {
    const q = parseQuantity(text);
    if (q.dimension === 'angle') return undefined;
    // A plain number is in the model unit, as everywhere else in the model.
    const plain = quantityIn(q, units);
    const sizeMm = q.dimension === 'plain' ? convertLength(plain, units, 'mm') : q.value;
    if (!(sizeMm > 0)) return undefined;
    return { label: text.trim(), mm: sizeMm, inch: sizeMm / MM_PER_IN };
  } catch {
    return undefined;
  }
}

function speedFor(material: string, drillMm: number): FeatureSpeed | undefined {
  try {
    const m = materialSpeeds(material);
    const { vcMPerMin, range, source } = conservativeSurfaceSpeed(material, 'drilling');
    return {
      rpm: spindleSpeedRpm(vcMPerMin, drillMm),
      vcMPerMin,
      range,
      material: m.name,
      formula: DRILL_FORMULA,
      source: `${SPEED_SOURCE}; HSS drilling, low end of ${range.min === range.max ? range.min : `${range.min}–${range.max}`} m/min (${source})`,
    };
  } catch {
    return undefined;
  }
}

/**
 * Evaluates every part and feature of a model for the shop: positions from each part's datum
 * with value, worst case and RSS; provenance and the given kinds each rests on; threads with
 * the tap drill by target % thread (default 75 %) and the nearest stock drill in the part's
 * drill set with the % thread it really cuts; close and free clearance; spindle speeds by the
 * part's material; pressure warnings; and the parts grouped by stack. Problems are reported
 * per feature in `errors`, never thrown.
 *
 * @example
 * const r = evaluateFeatures({
 *   format: 'fairsheet.model', version: 1, units: 'mm',
 *   dimensions: [{ name: 'pcd', kind: 'stated', value: 100 }],
 *   parts: [{ id: 'flange', name: 'Flange', material: 'mild-steel' }],
 *   features: [{ id: 'bolts', part: 'flange', kind: 'hole', x: 0, y: 0, drill: '6.6 mm',
 *     pattern: { type: 'circle', count: 6, pcd: 'pcd' } }],
 * });
 * r.features[0].rows[1].x.value // 25 (check-values §10)
 * r.features[0].speed?.rpm      // 964.6 (20 m/min at 6.6 mm)
 */
export function evaluateFeatures(input: unknown, options: SolveOptions = {}): FeaturesResult {
  const parsed = modelSchema.safeParse(input);
  if (!parsed.success) {
    return {
      units: null,
      status: 'invalid',
      parts: [],
      features: [],
      groups: [],
      issues: [{ code: 'schema', message: parsed.error.issues.map((i) => i.message).join('; ') }],
      order: READOUT_ORDER,
    };
  }
  const model: FairsheetModel = parsed.data;
  const units = model.units;
  const kindOf = new Map(model.dimensions.map((d) => [d.name, d.kind]));

  // A prefix no user name (dimension or relation id) starts with.
  let prefix = '__feat_';
  const taken = [...kindOf.keys(), ...model.relations.map((r) => r.id)];
  while (taken.some((n) => n.startsWith(prefix))) prefix += '_';

  const slots: Slot[] = [];
  const issues = new Map<string, FeatureIssue[]>(); // by feature id or `part:` + id
  const note = (key: string, issue: FeatureIssue) => {
    const list = issues.get(key) ?? [];
    list.push(issue);
    issues.set(key, list);
  };
  const dims: FairsheetModel['dimensions'] = [...model.dimensions];
  const rels: FairsheetModel['relations'] = [...model.relations];

  /** Adds a hidden dimension for `expr`; refuses it (with an issue) when it cannot be read. */
  function addSlot(
    expr: string | number,
    field: string,
    owner: { feature?: string; part?: string },
    key: string,
  ): Slot {
    const text = String(expr).trim();
    const name = `${prefix}${slots.length}`;
    let ok = true;
    let names = new Set<string>();
    try {
      names = namesOf(parseExpression(text), names);
      const unknown = [...names].filter((n) => !kindOf.has(n));
      if (unknown.length) {
        ok = false;
        note(key, {
          code: 'unknown-name',
          message: `${field}: no dimension named ${unknown.map((n) => `'${n}'`).join(', ')}`,
          field,
          ...owner,
        });
      }
    } catch (e) {
      if (!(e instanceof ExpressionError)) throw e;
      ok = false;
      note(key, {
        code: 'expression',
        message: `${field}: ${e.message}`,
        field,
        at: e.at,
        ...owner,
      });
    }
    const direct = kindOf.get(text) ?? null;
    const slot: Slot = {
      name,
      expr: text,
      direct,
      literal: ok && names.size === 0,
      field,
      ok,
      ...owner,
    };
    slots.push(slot);
    if (ok) {
      dims.push({ name, kind: 'derived', quantity: 'length' });
      rels.push({ id: name, expr: `${name} = ${text}`, enabled: true });
    }
    return slot;
  }

  /** A hidden dimension defined from other hidden ones (pattern holes). */
  function addDerivedSlot(
    expr: string,
    description: string,
    owner: { feature: string; part: string },
    field: string,
    ok: boolean,
  ): Slot {
    const name = `${prefix}${slots.length}`;
    const slot: Slot = {
      name,
      expr: description,
      direct: null,
      literal: false,
      field,
      ok,
      ...owner,
    };
    slots.push(slot);
    if (ok) {
      dims.push({ name, kind: 'derived', quantity: 'length' });
      rels.push({ id: name, expr: `${name} =${expr}`, enabled: true });
    }
    return slot;
  }

  // Parts.
  const partById = new Map<string, ModelPart>();
  const partSlots = new Map<string, { width?: Slot; height?: Slot }>();
  for (const part of model.parts) {
    const key = `part:${part.id}`;
    if (partById.has(part.id)) {
      note(key, {
        code: 'duplicate-id',
        message: `Two parts have the id '${part.id}'`,
        part: part.id,
      });
      continue;
    }
    partById.set(part.id, part);
    try {
      materialSpeeds(part.material);
    } catch {
      note(key, {
        code: 'unknown-material',
        message: `No surface speeds held for material '${part.material}': no spindle speeds`,
        part: part.id,
      });
    }
    partSlots.set(part.id, {
      width:
        part.width === undefined ? undefined : addSlot(part.width, 'width', { part: part.id }, key),
      height:
        part.height === undefined
          ? undefined
          : addSlot(part.height, 'height', { part: part.id }, key),
    });
  }

  // Features: their slots first, then one solve for all.
  interface Pending {
    feature: ModelFeature;
    x: Slot;
    y: Slot;
    size?: Slot;
    holes: { index: number; x: Slot; y: Slot }[];
    depth?: Slot;
    width?: Slot;
    length?: Slot;
  }
  const pending: Pending[] = [];
  const seenFeature = new Set<string>();
  for (const f of model.features) {
    if (seenFeature.has(f.id)) {
      note(`dup:${f.id}`, {
        code: 'duplicate-id',
        message: `Two features have the id '${f.id}'`,
        feature: f.id,
        part: f.part,
      });
      continue;
    }
    seenFeature.add(f.id);
    const owner = { feature: f.id, part: f.part };
    if (!partById.has(f.part)) {
      note(f.id, { code: 'unknown-part', message: `No part with the id '${f.part}'`, ...owner });
    }
    const x = addSlot(f.x, 'x', owner, f.id);
    const y = addSlot(f.y, 'y', owner, f.id);
    const p: Pending = { feature: f, x, y, holes: [] };
    if (f.pattern) {
      const field = f.pattern.type === 'circle' ? 'pcd' : 'pitch';
      const size = addSlot(
        f.pattern.type === 'circle' ? f.pattern.pcd : f.pattern.pitch,
        field,
        owner,
        f.id,
      );
      p.size = size;
      const ok = x.ok && y.ok && size.ok;
      for (let i = 0; i < f.pattern.count; i++) {
        let cx: number;
        let cy: number;
        if (f.pattern.type === 'circle') {
          // xᵢ = cx + (PCD/2)·cos(θ₀ + i·360°/N) (check-values §10).
          [cx, cy] = cosSin(f.pattern.startDeg + (i * 360) / f.pattern.count).map((c) => c / 2) as [
            number,
            number,
          ];
        } else {
          const [c, s] = cosSin(f.pattern.angleDeg);
          [cx, cy] = [i * c, i * s];
        }
        const description = `${f.pattern.type === 'circle' ? 'pitch circle' : 'row'} hole ${i + 1} of ${f.pattern.count}`;
        p.holes.push({
          index: i,
          x: addDerivedSlot(` ${x.name}${term(cx, size.name)}`, description, owner, 'x', ok),
          y: addDerivedSlot(` ${y.name}${term(cy, size.name)}`, description, owner, 'y', ok),
        });
      }
    }
    if (f.depth !== 'through') p.depth = addSlot(f.depth, 'depth', owner, f.id);
    if (f.width !== undefined) p.width = addSlot(f.width, 'width', owner, f.id);
    if (f.length !== undefined) p.length = addSlot(f.length, 'length', owner, f.id);
    pending.push(p);
  }

  // The model was read above; its hidden positions are not counted against the model's size
  // limits (a model at its limit with features still has its shop sheet).
  const result = solvePrepared(
    prepareModel({ ...model, dimensions: dims, relations: rels }),
    options,
  );
  const slotByName = new Map(slots.map((s) => [s.name, s]));
  for (const e of result.errors) {
    const slot = e.relation ? slotByName.get(e.relation) : undefined;
    if (!slot) continue;
    const key = slot.feature ?? `part:${slot.part}`;
    note(key, {
      code: e.code === 'unit-mismatch' ? 'unit-mismatch' : 'expression',
      message: `${slot.field}: ${e.message}`,
      field: slot.field,
      ...(e.at !== undefined && { at: Math.max(0, e.at - slot.name.length - 3) }),
      ...(slot.feature ? { feature: slot.feature } : {}),
      ...(slot.part ? { part: slot.part } : {}),
    });
  }

  function lengthOf(slot: Slot): FeatureLength {
    const v = slot.ok ? result.values[slot.name] : undefined;
    const contributors = (v?.contributors ?? []).filter(
      (c) => c.sensitivity !== 0 && kindOf.has(c.name),
    );
    const kinds = new Set(contributors.map((c) => kindOf.get(c.name) as GivenKind));
    let provenance: Provenance = slot.direct ?? 'derived';
    let value = v?.value ?? null;
    if (slot.literal && value !== null) {
      provenance = Math.abs(value) < 1e-12 ? 'datum' : 'assumed';
      if (provenance === 'assumed') kinds.add('assumed');
      if (provenance === 'datum') value = 0;
    }
    return {
      expr: slot.expr,
      value,
      worstCase: v?.worstCase ?? null,
      rss: v?.rss ?? null,
      provenance,
      restsOn: GIVEN_ORDER.filter((k) => kinds.has(k)),
      contributors,
    };
  }

  const undeterminedNote = (
    field: string,
    owner: { feature: string; part: string },
  ): FeatureIssue => ({
    code: 'unsolved',
    message: `${field}: the position is open; find ${result.needs === 1 ? 'one more figure' : `${result.needs} more figures`} on the drawing (see the open values)`,
    field,
    ...owner,
  });

  const features: FeatureResult[] = [];
  for (const p of pending) {
    const f = p.feature;
    const owner = { feature: f.id, part: f.part };
    const part = partById.get(f.part);
    const label = f.label?.trim() || f.id;
    const x = lengthOf(p.x);
    const y = lengthOf(p.y);
    const size = p.size && lengthOf(p.size);
    const rows: FeatureRow[] = p.holes.length
      ? p.holes.map((h) => ({
          feature: f.id,
          part: f.part,
          index: h.index,
          label: `${label} ${h.index + 1}/${p.holes.length}`,
          x: lengthOf(h.x),
          y: lengthOf(h.y),
        }))
      : [{ feature: f.id, part: f.part, index: null, label, x, y }];
    for (const [field, slot, value] of [
      ['x', p.x, x],
      ['y', p.y, y],
      ...(p.size && size ? [[p.size.field, p.size, size] as const] : []),
    ] as const) {
      if (slot.ok && value.value === null && !issues.get(f.id)?.some((i) => i.field === field)) {
        note(f.id, undeterminedNote(field, owner));
      }
    }

    // What makes the hole.
    let thread: FeatureThread | undefined;
    let spec: ThreadSpec | undefined;
    if (f.thread) {
      try {
        spec = threadByDesignation(f.thread);
        thread = {
          designation: spec.designation,
          series: spec.series,
          majorMm: spec.majorDiameterMm,
          pitchMm: spec.pitchMm,
          ...(spec.tpi !== undefined && { tpi: spec.tpi }),
          source: spec.source,
        };
      } catch (e) {
        if (!(e instanceof ThreadError)) throw e;
        note(f.id, { code: 'unknown-thread', message: e.message, field: 'thread', ...owner });
      }
    } else if (f.kind === 'tapped') {
      note(f.id, {
        code: 'missing-thread',
        message: 'A tapped hole needs a thread (e.g. 6BA, M4, 1/8x40 ME)',
        field: 'thread',
        ...owner,
      });
    }
    const set: DrillSetName = part?.drillSet ?? 'metric';
    let tap: FeatureTap | undefined;
    let clearance: FeatureClearance | undefined;
    let drill: FeatureDrill | undefined;
    if (spec && f.kind === 'tapped') {
      const t = tapDrillFor(spec, f.percentThread, set);
      tap = {
        targetPercent: t.targetPercent,
        theoreticalMm: t.theoreticalMm,
        stock: t.stock,
        ...(t.published && { published: t.published }),
        rule: t.rule,
        source: t.source,
      };
      drill = {
        label: t.stock.label,
        mm: t.stock.mm,
        inch: t.stock.inch,
        role: 'tap',
        percentThread: t.stock.percentThread,
        source: t.source,
      };
    } else if (spec && f.kind === 'hole') {
      const c = clearanceFor(spec);
      const fit = f.clearance ?? 'free';
      const wanted = fit === 'close' ? c.close : c.free;
      const stock = nearestDrill(wanted.mm, set, { mode: 'atLeast' });
      clearance = { fit, close: c.close, free: c.free, stock, source: c.source };
      drill = {
        label: stock.label,
        mm: stock.mm,
        inch: stock.inch,
        role: 'clearance',
        source: `${fit} clearance ${wanted.label}: ${wanted.source}; smallest ${drillSetWords(set)} stock drill at least that size`,
      };
    }
    if (f.drill) {
      const named = drillFromText(f.drill, units);
      if (!named) {
        note(f.id, {
          code: 'unreadable-drill',
          message: `Cannot read the drill '${f.drill}' (write #29, F, 7/64", 3.3 mm)`,
          field: 'drill',
          ...owner,
        });
      } else {
        let nearestStock: StockDrill | undefined;
        if (!named.stock) {
          try {
            nearestStock = nearestDrill(named.mm, set);
          } catch {
            nearestStock = undefined;
          }
        }
        drill = {
          label: named.label,
          mm: named.mm,
          inch: named.inch,
          role: 'named',
          ...(spec && f.kind === 'tapped' && { percentThread: percentThreadFor(spec, named.mm) }),
          ...(nearestStock && { nearestStock }),
          source: named.stock
            ? 'the drill written on the feature (a stock size)'
            : 'the size written on the feature',
        };
      }
    }
    const speed = drill && part ? speedFor(part.material, drill.mm) : undefined;

    // Pressure-bearing parts need written or approved figures.
    const warnings: FeatureIssue[] = [];
    if (part?.pressure) {
      const soft = new Set<string>();
      let typed = false;
      for (const l of [x, y, ...(size ? [size] : [])]) {
        for (const c of l.contributors) {
          const k = kindOf.get(c.name);
          if (k === 'scaled' || k === 'assumed') soft.add(c.name);
        }
        if (l.provenance === 'assumed' && l.contributors.length === 0) typed = true;
      }
      if (soft.size || typed) {
        const names = [...soft];
        const what = [
          ...names.map((n) => `${n} (${kindOf.get(n)})`),
          ...(typed ? ['a figure typed on the feature'] : []),
        ];
        warnings.push({
          code: 'pressure',
          message: `Pressure-bearing part: the position rests on ${what.join(', ')}; use written or approved figures`,
          names,
          ...owner,
        });
      }
    }

    const errors = (issues.get(f.id) ?? []).filter((i) => i.code !== 'pressure');
    features.push({
      id: f.id,
      part: f.part,
      kind: f.kind,
      label,
      x,
      y,
      ...(f.pattern &&
        size && {
          pattern: {
            type: f.pattern.type,
            count: f.pattern.count,
            size,
            angleDeg: f.pattern.type === 'circle' ? f.pattern.startDeg : f.pattern.angleDeg,
          },
        }),
      ...(thread && { thread }),
      ...(tap && { tap }),
      ...(clearance && { clearance }),
      ...(drill && { drill }),
      ...(speed && { speed }),
      depth: p.depth ? lengthOf(p.depth) : 'through',
      ...(p.width && { width: lengthOf(p.width) }),
      ...(p.length && { length: lengthOf(p.length) }),
      ...(f.note && { note: f.note }),
      rows,
      errors,
      warnings,
    });
  }

  const parts: PartResult[] = [...partById.values()].map((part) => {
    const s = partSlots.get(part.id) ?? {};
    let materialName: string | undefined;
    try {
      materialName = materialSpeeds(part.material).name;
    } catch {
      materialName = undefined;
    }
    return {
      id: part.id,
      name: part.name,
      material: part.material,
      ...(materialName && { materialName }),
      quantity: part.quantity,
      stack: part.stack ?? null,
      pressure: part.pressure,
      drillSet: part.drillSet,
      ...(s.width && { width: lengthOf(s.width) }),
      ...(s.height && { height: lengthOf(s.height) }),
      ...(part.notes && { notes: part.notes }),
      features: features.filter((f) => f.part === part.id).map((f) => f.id),
      errors: issues.get(`part:${part.id}`) ?? [],
    };
  });

  // Groups: a stack once with its parts, in order of the stack's first part; other parts alone.
  const groups: SheetGroup[] = [];
  const groupOf = new Map<string, string[]>();
  for (const part of parts) {
    const key = part.stack ? `stack:${part.stack}` : `part:${part.id}`;
    if (!groupOf.has(key)) groupOf.set(key, []);
    groupOf.get(key)!.push(part.id);
  }
  for (const [key, ids] of groupOf) {
    const stack = key.startsWith('stack:') ? key.slice(6) : null;
    const members = features.filter((f) => ids.includes(f.part));
    groups.push({
      id: stack ?? ids[0],
      stack,
      parts: ids,
      pressure: parts.some((p) => ids.includes(p.id) && p.pressure),
      rows: sortForReadout(members.flatMap((f) => f.rows)),
      features: members.map((f) => f.id),
      pressureFeatures: members
        .filter((f) => f.warnings.some((w) => w.code === 'pressure'))
        .map((f) => f.id),
    });
  }

  const all: FeatureIssue[] = [
    ...[...issues.entries()]
      .filter(([k]) => k.startsWith('part:') || k.startsWith('dup:'))
      .flatMap(([, v]) => v),
    ...features.flatMap((f) => [...f.errors, ...f.warnings]),
  ];
  // The model's own status: errors, gaps and contradictions of the hidden positions are the
  // features' (reported above), not the drawing's.
  const userErrors = result.errors.filter((e) => !(e.relation && slotByName.has(e.relation)));
  const userOpen = result.undetermined.filter((n) => !n.startsWith(prefix));
  const status: SolveStatus = userErrors.length
    ? 'invalid'
    : result.contradictions.length
      ? 'contradictory'
      : userOpen.length
        ? 'incomplete'
        : 'solved';
  return {
    units,
    status,
    parts,
    features,
    groups,
    issues: all,
    order: READOUT_ORDER,
  };
}
