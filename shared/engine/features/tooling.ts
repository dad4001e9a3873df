/**
 * What makes a hole: the thread, the tap drill by target % thread and the nearest stock drill
 * that cuts it, the close and free clearance, a drill written on the feature, and the spindle
 * speed for the part's material.
 */
import { convertLength, MM_PER_IN, type ModelUnit } from '../length';
import { drillByLabel, nearestDrill, type DrillSetName, type StockDrill } from '../drills';
import type { ModelFeature, ModelPart } from '../model';
import { parseQuantity, quantityIn } from '../quantity';
import { conservativeSurfaceSpeed, materialSpeeds, spindleSpeedRpm } from '../shop-math';
import {
  clearanceFor,
  drillSetWords,
  percentThreadFor,
  tapDrillFor,
  threadByDesignation,
  ThreadError,
  type ThreadSpec,
} from '../threads';
import type {
  FeatureClearance,
  FeatureDrill,
  FeatureIssue,
  FeatureSpeed,
  FeatureTap,
  FeatureThread,
} from './types';

const DRILL_FORMULA = 'N = 1000·Vc/(π·D), Vc in m/min, D in mm';
// N = 1000·Vc/(π·D) [published] incoherency.co.uk/jesref/lathe-speeds.html (check-values §9).
const SPEED_SOURCE = 'N = 1000·Vc/(π·D)';

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

export interface HoleTooling {
  readonly thread?: FeatureThread;
  readonly tap?: FeatureTap;
  readonly clearance?: FeatureClearance;
  readonly drill?: FeatureDrill;
  readonly speed?: FeatureSpeed;
}

/**
 * The tooling of one feature; what cannot be read (an unknown thread, a tapped hole without
 * one, a drill that is no size) is noted through `note`, in that order.
 *
 * @example toolHole({ id: 'h1', part: 'p', kind: 'tapped', thread: 'M4', … }, part, 'mm', note).drill?.role // 'tap'
 */
export function toolHole(
  f: ModelFeature,
  part: ModelPart | undefined,
  units: ModelUnit,
  note: (issue: FeatureIssue) => void,
): HoleTooling {
  const owner = { feature: f.id, part: f.part };
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
      note({ code: 'unknown-thread', message: e.message, field: 'thread', ...owner });
    }
  } else if (f.kind === 'tapped') {
    note({
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
      note({
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

  return {
    ...(thread && { thread }),
    ...(tap && { tap }),
    ...(clearance && { clearance }),
    ...(drill && { drill }),
    ...(speed && { speed }),
  };
}
