/**
 * Step 3, read rows: each position read back from the solve with its stack-up and what it
 * rests on; a feature's rows (one a hole), its tooling and its pressure warning; each part's
 * sizes.
 */
import type { DimensionKind } from '../model';
import { NUMERIC_TOLERANCE } from '../numeric';
import { materialSpeeds } from '../shop-math';
import type { Expansion, PendingFeature, Slot } from './expand';
import type { SolvedExpansion } from './solve';
import { toolHole } from './tooling';
import type {
  FeatureIssue,
  FeatureLength,
  FeatureResult,
  FeatureRow,
  GivenKind,
  PartResult,
  Provenance,
} from './types';

const GIVEN_ORDER: readonly GivenKind[] = ['stated', 'scaled', 'assumed', 'asbuilt'];

/** Reads hidden dimensions back as the features' lengths. */
export class LengthReader {
  constructor(
    private readonly solved: SolvedExpansion,
    private readonly kindOf: ReadonlyMap<string, DimensionKind>,
  ) {}

  /**
   * One position with its provenance and the given kinds it rests on.
   *
   * @example reader.length(slot).restsOn // ['stated', 'scaled']
   */
  length(slot: Slot): FeatureLength {
    const { kindOf } = this;
    const v = slot.ok ? this.solved.result.values[slot.name] : undefined;
    const contributors = (v?.contributors ?? []).filter(
      (c) => c.sensitivity !== 0 && kindOf.has(c.name),
    );
    const kinds = new Set(contributors.map((c) => kindOf.get(c.name) as GivenKind));
    let provenance: Provenance = slot.direct ?? 'derived';
    let value = v?.value ?? null;
    if (slot.literal && value !== null) {
      provenance = Math.abs(value) < NUMERIC_TOLERANCE.absolute ? 'datum' : 'assumed';
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
}

/** A pressure-bearing part's position must rest on written or approved figures. */
function pressureWarnings(
  lengths: readonly FeatureLength[],
  kindOf: ReadonlyMap<string, DimensionKind>,
  owner: { feature: string; part: string },
): FeatureIssue[] {
  const soft = new Set<string>();
  let typed = false;
  for (const l of lengths) {
    for (const c of l.contributors) {
      const k = kindOf.get(c.name);
      if (k === 'scaled' || k === 'assumed') soft.add(c.name);
    }
    if (l.provenance === 'assumed' && l.contributors.length === 0) typed = true;
  }
  if (!soft.size && !typed) return [];
  const names = [...soft];
  const what = [
    ...names.map((n) => `${n} (${kindOf.get(n)})`),
    ...(typed ? ['a figure typed on the feature'] : []),
  ];
  return [
    {
      code: 'pressure',
      message: `Pressure-bearing part: the position rests on ${what.join(', ')}; use written or approved figures`,
      names,
      ...owner,
    },
  ];
}

function readFeature(
  p: PendingFeature,
  expansion: Expansion,
  solved: SolvedExpansion,
  reader: LengthReader,
): FeatureResult {
  const { issues, kindOf } = expansion;
  const f = p.feature;
  const owner = { feature: f.id, part: f.part };
  const part = expansion.partById.get(f.part);
  const label = f.label?.trim() || f.id;
  const x = reader.length(p.x);
  const y = reader.length(p.y);
  const size = p.size && reader.length(p.size);
  const rows: FeatureRow[] = p.holes.length
    ? p.holes.map((h) => ({
        feature: f.id,
        part: f.part,
        index: h.index,
        label: `${label} ${h.index + 1}/${p.holes.length}`,
        x: reader.length(h.x),
        y: reader.length(h.y),
      }))
    : [{ feature: f.id, part: f.part, index: null, label, x, y }];
  const needs = solved.result.needs;
  for (const [field, slot, value] of [
    ['x', p.x, x],
    ['y', p.y, y],
    ...(p.size && size ? [[p.size.field, p.size, size] as const] : []),
  ] as const) {
    if (slot.ok && value.value === null && !issues.of(f.id)?.some((i) => i.field === field)) {
      issues.note(f.id, {
        code: 'unsolved',
        message: `${field}: the position is open; find ${needs === 1 ? 'one more figure' : `${needs} more figures`} on the drawing (see the open values)`,
        field,
        ...owner,
      });
    }
  }

  const tooling = toolHole(f, part, expansion.model.units, (issue) => issues.note(f.id, issue));
  const warnings = part?.pressure
    ? pressureWarnings([x, y, ...(size ? [size] : [])], kindOf, owner)
    : [];
  const errors = (issues.of(f.id) ?? []).filter((i) => i.code !== 'pressure');
  return {
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
    ...tooling,
    depth: p.depth ? reader.length(p.depth) : 'through',
    ...(p.width && { width: reader.length(p.width) }),
    ...(p.length && { length: reader.length(p.length) }),
    ...(f.note && { note: f.note }),
    rows,
    errors,
    warnings,
  };
}

/**
 * Every feature read back from the solve, in model order (repeated ids left out).
 *
 * @example readFeatures(expansion, solved, reader)[0].rows.length // 6 for a circle of six
 */
export function readFeatures(
  expansion: Expansion,
  solved: SolvedExpansion,
  reader: LengthReader,
): FeatureResult[] {
  return expansion.pending.map((p) => readFeature(p, expansion, solved, reader));
}

/**
 * Every part with its sizes, material and features (repeated ids left out).
 *
 * @example readParts(expansion, features, reader)[0].features // ['bolts']
 */
export function readParts(
  expansion: Expansion,
  features: readonly FeatureResult[],
  reader: LengthReader,
): PartResult[] {
  return [...expansion.partById.values()].map((part) => {
    const s = expansion.partSlots.get(part.id) ?? {};
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
      ...(s.width && { width: reader.length(s.width) }),
      ...(s.height && { height: reader.length(s.height) }),
      ...(part.notes && { notes: part.notes }),
      features: features.filter((f) => f.part === part.id).map((f) => f.id),
      errors: expansion.issues.of(`part:${part.id}`) ?? [],
    };
  });
}
