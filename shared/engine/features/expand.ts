/**
 * Step 1, expand: every position a feature or part writes becomes a hidden derived dimension
 * with one relation `hidden = <expression>` in a copy of the model; a pattern adds one pair per
 * hole, written over the pattern's centre (or first hole) and its pitch circle (or pitch).
 */
import { parseExpression, ExpressionError, type ExprNode } from '../expression';
import type { DimensionKind, FairsheetModel, ModelFeature, ModelPart } from '../model';
import { materialSpeeds } from '../shop-math';
import { IssueLog } from './issues';

/**
 * The dimension names an expression uses, in order of first use; throws ExpressionError (with
 * the offset) for a syntax error or a forbidden construct, like `parseExpression`.
 *
 * @example expressionNames('horn1_x - horn_gap / 2') // ['horn1_x', 'horn_gap']
 */
export function expressionNames(text: string): string[] {
  return [...namesOf(parseExpression(text), new Set<string>())];
}

export function namesOf(node: ExprNode, into: Set<string>): Set<string> {
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

export interface Slot {
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

/** A feature with its slots, waiting for the solve. */
export interface PendingFeature {
  readonly feature: ModelFeature;
  readonly x: Slot;
  readonly y: Slot;
  readonly size?: Slot;
  readonly holes: { readonly index: number; readonly x: Slot; readonly y: Slot }[];
  readonly depth?: Slot;
  readonly width?: Slot;
  readonly length?: Slot;
}

export interface Expansion {
  readonly model: FairsheetModel;
  /** The kind of each of the model's own dimensions, by name. */
  readonly kindOf: ReadonlyMap<string, DimensionKind>;
  /** The prefix of every hidden name: no name of the model starts with it. */
  readonly prefix: string;
  readonly slots: readonly Slot[];
  /** The model with the hidden dimensions and relations added. */
  readonly expanded: FairsheetModel;
  readonly partById: ReadonlyMap<string, ModelPart>;
  readonly partSlots: ReadonlyMap<string, { readonly width?: Slot; readonly height?: Slot }>;
  readonly pending: readonly PendingFeature[];
  readonly issues: IssueLog;
}

/** Hands out hidden dimensions, each with its relation, and notes what cannot be read. */
class SlotMaker {
  readonly slots: Slot[] = [];
  readonly dims: FairsheetModel['dimensions'];
  readonly rels: FairsheetModel['relations'];

  constructor(
    model: FairsheetModel,
    private readonly kindOf: ReadonlyMap<string, DimensionKind>,
    private readonly prefix: string,
    private readonly issues: IssueLog,
  ) {
    this.dims = [...model.dimensions];
    this.rels = [...model.relations];
  }

  /** Adds a hidden dimension for `expr`; refuses it (with an issue) when it cannot be read. */
  add(
    expr: string | number,
    field: string,
    owner: { feature?: string; part?: string },
    key: string,
  ): Slot {
    const text = String(expr).trim();
    const name = `${this.prefix}${this.slots.length}`;
    let ok = true;
    let names = new Set<string>();
    try {
      names = namesOf(parseExpression(text), names);
      const unknown = [...names].filter((n) => !this.kindOf.has(n));
      if (unknown.length) {
        ok = false;
        this.issues.note(key, {
          code: 'unknown-name',
          message: `${field}: no dimension named ${unknown.map((n) => `'${n}'`).join(', ')}`,
          field,
          ...owner,
        });
      }
    } catch (e) {
      if (!(e instanceof ExpressionError)) throw e;
      ok = false;
      this.issues.note(key, {
        code: 'expression',
        message: `${field}: ${e.message}`,
        field,
        at: e.at,
        ...owner,
      });
    }
    const direct = this.kindOf.get(text) ?? null;
    const slot: Slot = {
      name,
      expr: text,
      direct,
      literal: ok && names.size === 0,
      field,
      ok,
      ...owner,
    };
    this.slots.push(slot);
    if (ok) {
      this.dims.push({ name, kind: 'derived', quantity: 'length' });
      this.rels.push({ id: name, expr: `${name} = ${text}`, enabled: true });
    }
    return slot;
  }

  /** A hidden dimension defined from other hidden ones (pattern holes). */
  addDerived(
    expr: string,
    description: string,
    owner: { feature: string; part: string },
    field: string,
    ok: boolean,
  ): Slot {
    const name = `${this.prefix}${this.slots.length}`;
    const slot: Slot = {
      name,
      expr: description,
      direct: null,
      literal: false,
      field,
      ok,
      ...owner,
    };
    this.slots.push(slot);
    if (ok) {
      this.dims.push({ name, kind: 'derived', quantity: 'length' });
      this.rels.push({ id: name, expr: `${name} =${expr}`, enabled: true });
    }
    return slot;
  }
}

/** The slots of a pattern's holes: xᵢ = cx + (PCD/2)·cos(θ₀ + i·360°/N) (check-values §10). */
function patternHoles(
  f: ModelFeature & { pattern: NonNullable<ModelFeature['pattern']> },
  at: { x: Slot; y: Slot; size: Slot },
  slots: SlotMaker,
): PendingFeature['holes'] {
  const owner = { feature: f.id, part: f.part };
  const ok = at.x.ok && at.y.ok && at.size.ok;
  const holes: PendingFeature['holes'] = [];
  for (let i = 0; i < f.pattern.count; i++) {
    let cx: number;
    let cy: number;
    if (f.pattern.type === 'circle') {
      [cx, cy] = cosSin(f.pattern.startDeg + (i * 360) / f.pattern.count).map((c) => c / 2) as [
        number,
        number,
      ];
    } else {
      const [c, s] = cosSin(f.pattern.angleDeg);
      [cx, cy] = [i * c, i * s];
    }
    const description = `${f.pattern.type === 'circle' ? 'pitch circle' : 'row'} hole ${i + 1} of ${f.pattern.count}`;
    holes.push({
      index: i,
      x: slots.addDerived(` ${at.x.name}${term(cx, at.size.name)}`, description, owner, 'x', ok),
      y: slots.addDerived(` ${at.y.name}${term(cy, at.size.name)}`, description, owner, 'y', ok),
    });
  }
  return holes;
}

/**
 * Expands a checked model's parts and features into hidden dimensions and relations, noting
 * duplicate ids, unknown parts and materials, and expressions that cannot be read.
 *
 * @example
 * // one part, one feature at x: 'a + 1', y: 0
 * expandFeatures(model).expanded.relations.map((r) => r.expr) // ['__feat_0 = a + 1', '__feat_1 = 0']
 */
export function expandFeatures(model: FairsheetModel): Expansion {
  const kindOf = new Map(model.dimensions.map((d) => [d.name, d.kind]));

  // A prefix no user name (dimension or relation id) starts with.
  let prefix = '__feat_';
  const taken = [...kindOf.keys(), ...model.relations.map((r) => r.id)];
  while (taken.some((n) => n.startsWith(prefix))) prefix += '_';

  const issues = new IssueLog();
  const slots = new SlotMaker(model, kindOf, prefix, issues);

  // Parts.
  const partById = new Map<string, ModelPart>();
  const partSlots = new Map<string, { width?: Slot; height?: Slot }>();
  for (const part of model.parts) {
    const key = `part:${part.id}`;
    if (partById.has(part.id)) {
      issues.note(key, {
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
      issues.note(key, {
        code: 'unknown-material',
        message: `No surface speeds held for material '${part.material}': no spindle speeds`,
        part: part.id,
      });
    }
    partSlots.set(part.id, {
      width:
        part.width === undefined
          ? undefined
          : slots.add(part.width, 'width', { part: part.id }, key),
      height:
        part.height === undefined
          ? undefined
          : slots.add(part.height, 'height', { part: part.id }, key),
    });
  }

  // Features: all their slots, so that one solve gives every position.
  const pending: PendingFeature[] = [];
  const seenFeature = new Set<string>();
  for (const f of model.features) {
    if (seenFeature.has(f.id)) {
      issues.note(`dup:${f.id}`, {
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
      issues.note(f.id, {
        code: 'unknown-part',
        message: `No part with the id '${f.part}'`,
        ...owner,
      });
    }
    const x = slots.add(f.x, 'x', owner, f.id);
    const y = slots.add(f.y, 'y', owner, f.id);
    let size: Slot | undefined;
    let holes: PendingFeature['holes'] = [];
    if (f.pattern) {
      size = slots.add(
        f.pattern.type === 'circle' ? f.pattern.pcd : f.pattern.pitch,
        f.pattern.type === 'circle' ? 'pcd' : 'pitch',
        owner,
        f.id,
      );
      holes = patternHoles({ ...f, pattern: f.pattern }, { x, y, size }, slots);
    }
    pending.push({
      feature: f,
      x,
      y,
      ...(size && { size }),
      holes,
      ...(f.depth !== 'through' && { depth: slots.add(f.depth, 'depth', owner, f.id) }),
      ...(f.width !== undefined && { width: slots.add(f.width, 'width', owner, f.id) }),
      ...(f.length !== undefined && { length: slots.add(f.length, 'length', owner, f.id) }),
    });
  }

  return {
    model,
    kindOf,
    prefix,
    slots: slots.slots,
    expanded: { ...model, dimensions: slots.dims, relations: slots.rels },
    partById,
    partSlots,
    pending,
    issues,
  };
}
