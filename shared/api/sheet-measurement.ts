import { z } from 'zod';
import {
  convertLength,
  DIMENSION_NAME,
  formatLength,
  LENGTH_PLACES,
  measureBetweenPins,
  modelSchema,
  prototypeToModel,
  roundUpTo,
  type FairsheetModelInput,
  type ModelUnit,
  type SheetPoint,
} from '../engine';
import type { BuiltCalibration } from './sheet-calibration';
import { sheet, type Measurement } from './sheets';

/**
 * A measurement between two pins of a sheet, kept as a `scaled` dimension of the model. The
 * server measures (these functions, with the sheet's stored calibration and pins) and writes
 * the sheet's record and the model's dimension in one transaction; the browser uses the same
 * functions to show the figure before it is asked for.
 */

/** POST /api/projects/:projectId/sheets/:sheetId/measurements */
export const measureBody = z.object({
  /** The sheet's revision the pins and calibration were read at; stale: 409. */
  sheetRevision: z.number().int().nonnegative(),
  /** The model's revision the browser's copy is based on; stale: 409 and nothing written. */
  modelRevision: z.number().int().nonnegative(),
  from: z.string().min(1).max(40),
  to: z.string().min(1).max(40),
  dimension: z.string().trim().min(1).max(80),
  label: z.string().trim().max(200).optional(),
  /** The dimension's name before this re-measure renames it. */
  previousName: z.string().trim().min(1).max(80).optional(),
});
export type MeasureBody = z.input<typeof measureBody>;

export const measureAnswer = z.object({
  sheet,
  model: z.object({
    revision: z.number().int().nonnegative(),
    model: modelSchema,
    summary: z.string(),
  }),
  /** The dimension as written into the model. */
  dimension: z.string(),
});
export type MeasureAnswer = z.infer<typeof measureAnswer>;

/** A length between two pins at model size, with its ± (already at model size too). */
export interface SheetMeasure {
  lengthMm: number;
  uncertaintyMm: number;
  pickMm: number;
  calibrationMm: number;
  limitedByFloor: boolean;
}

/**
 * The model-size length between two sheet points and its ±: the calibration's own uncertainty
 * and the pins' pick error, never below the engine's floor; a photo of the prototype divides
 * both by the model scale. Throws the engine's CalibrationError (e.g. both pins on one pixel).
 *
 * @example measureOnSheet(buildSheetCalibration(sheet.calibration), pinA, pinB).lengthMm
 */
export function measureOnSheet(
  built: BuiltCalibration,
  a: SheetPoint,
  b: SheetPoint,
): SheetMeasure {
  const m = measureBetweenPins(built.cal, a, b, { pickErrorPx: built.pickErrorPx });
  const atModel = prototypeToModel(m, built.ratio);
  return {
    lengthMm: atModel.lengthMm,
    uncertaintyMm: atModel.uncertaintyMm,
    pickMm: m.pickMm * built.ratio,
    calibrationMm: m.calibrationMm * built.ratio,
    limitedByFloor: m.limitedByFloor,
  };
}

/**
 * A measured ± as written into the model: rounded up in the model unit's places, so the saved
 * figure is never better than measured.
 *
 * @example measuredTolerance(0.7874, 'in') // '0.0310 in'
 */
export function measuredTolerance(mm: number, unit: ModelUnit): string {
  return formatLength(roundUpTo(convertLength(mm, 'mm', unit), LENGTH_PLACES[unit]), unit, unit);
}

type Dimension = FairsheetModelInput['dimensions'][number];
type Model = Pick<FairsheetModelInput, 'units' | 'dimensions'>;

/**
 * The `scaled` dimension a measurement keeps: value and ± in the model unit, the sheet it was
 * measured on, and the label, part and note of the dimension it replaces.
 *
 * @example scaledDimension({ name: 'bore_ctr', label: '', measure: m, unit: 'in', sheetId })
 */
export function scaledDimension(args: {
  name: string;
  label: string;
  measure: Pick<SheetMeasure, 'lengthMm' | 'uncertaintyMm'>;
  unit: ModelUnit;
  sheetId: string;
  existing?: Dimension;
}): Dimension {
  const { name, measure, unit, sheetId, existing } = args;
  const d: Dimension = {
    name,
    kind: 'scaled',
    quantity: 'length',
    value: formatLength(measure.lengthMm, 'mm', unit),
    tol: measuredTolerance(measure.uncertaintyMm, unit),
    sheet: sheetId,
  };
  const label = args.label || existing?.label || '';
  if (label) d.label = label;
  if (existing?.part) d.part = existing.part;
  if (existing?.note) d.note = existing.note;
  return d;
}

/**
 * Why `name` cannot hold a measurement on this sheet, or '' when it can. Measuring an unknown
 * (a derived dimension) is how a missing figure gets found: it becomes a scaled one.
 *
 * @example measurementNameProblem(model, sheet, 'bore ctr') // 'A name is a letter or _ …'
 */
export function measurementNameProblem(
  model: Model,
  sheetDoc: { id: string; measurements: readonly Measurement[] },
  name: string,
  previousName?: string,
): string {
  if (!name) return 'Give the dimension a name';
  if (!DIMENSION_NAME.test(name)) {
    return 'A name is a letter or _ followed by letters, digits or _ (e.g. bore_ctr)';
  }
  if (name === previousName) return '';
  const clash = model.dimensions.find((d) => d.name === name);
  if (!clash) return '';
  const ours = sheetDoc.measurements.some((m) => m.dimension === name);
  if (clash.kind === 'scaled' && clash.sheet === sheetDoc.id && ours) {
    return `${name} is already measured on this sheet; pick it in the list to re-measure it`;
  }
  if (clash.kind === 'derived') return '';
  return `There is already a ${clash.kind} dimension named ${name}`;
}

/**
 * Renames a dimension inside a relation, whole identifiers only (not inside longer names).
 *
 * @example renameInExpression('a + ab', 'a', 'c') // 'c + ab'
 */
export function renameInExpression(expr: string, from: string, to: string): string {
  const escaped = from.replace(/\./g, '\\.');
  return expr.replace(new RegExp(`(?<![\\w.])${escaped}(?![\\w(.])`, 'g'), to);
}

/**
 * Puts a dimension into a model (in place), replacing the one named `previousName` (or its own
 * name); a rename is carried into the relations.
 */
export function putDimension(
  model: FairsheetModelInput,
  dimension: Dimension,
  previousName?: string,
): void {
  const key = previousName ?? dimension.name;
  const at = model.dimensions.findIndex((d) => d.name === key);
  if (at >= 0) model.dimensions[at] = dimension;
  else model.dimensions.push(dimension);
  if (previousName && previousName !== dimension.name) {
    for (const r of model.relations ?? []) {
      r.expr = renameInExpression(r.expr, previousName, dimension.name);
    }
  }
}

/**
 * The sheet's measurements with this one recorded: it replaces the record of the same
 * dimension (or of `previousName`), or of the same two pins either way round.
 */
export function putMeasurementRecord(
  measurements: readonly Measurement[],
  m: { from: string; to: string; dimension: string; previousName?: string },
  newId: () => string,
): Measurement[] {
  const key = m.previousName ?? m.dimension;
  const at = measurements.findIndex(
    (x) =>
      x.dimension === key ||
      (x.from === m.from && x.to === m.to) ||
      (x.from === m.to && x.to === m.from),
  );
  const previous = at >= 0 ? measurements[at] : undefined;
  const record = {
    id: previous ? previous.id : newId(),
    from: m.from,
    to: m.to,
    dimension: m.dimension,
  };
  const out = [...measurements];
  if (at >= 0) out[at] = record;
  else out.push(record);
  return out;
}
