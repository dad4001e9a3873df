import {
  checkCalibration,
  fitHomography,
  parseModelScale,
  perAxisScale,
  twoPointScale,
  type ReferenceLength,
  type SheetCalibration,
} from '../engine';
import type { KnownLength, SheetCalibrationDto } from './sheets';

/** A known length as the engine takes it. */
export const referenceOf = (k: KnownLength): ReferenceLength => ({
  a: k.a,
  b: k.b,
  lengthMm: k.lengthMm,
  toleranceMm: k.tolMm ?? 0,
});

/** A sheet's stored calibration turned into the engine's mapping, with its model scale. */
export interface BuiltCalibration {
  cal: SheetCalibration;
  /** model / full size: 1 for a drawing, 1/8 for a photo of the full-size engine at 1:8. */
  ratio: number;
  /** "1:8" when the sheet is a photo of the prototype; null for a drawing. */
  scaleLabel: string | null;
  pickErrorPx: number;
}

/**
 * The engine's calibration for a stored one, the same in the browser and on the server. Throws
 * the engine's CalibrationError (with a message for the builder) when the picks cannot define a
 * mapping, a check length cannot be read, or the model scale does not parse.
 *
 * @example buildSheetCalibration(sheet.calibration).cal.mmPerPx
 */
export function buildSheetCalibration(dto: SheetCalibrationDto): BuiltCalibration {
  const opts = { pickErrorPx: dto.pickErrorPx ?? 2 };
  let cal: SheetCalibration;
  switch (dto.method) {
    case 'two-point':
      cal = twoPointScale(referenceOf(dto.reference), opts);
      break;
    case 'per-axis':
      cal = perAxisScale(
        { horizontal: referenceOf(dto.horizontal), vertical: referenceOf(dto.vertical) },
        opts,
      );
      break;
    case 'four-point': {
      const [w, h] = [dto.widthMm, dto.heightMm];
      // Corners in order TL, TR, BR, BL map to the rectangle's corners in millimetres.
      const [tl, tr, br, bl] = dto.corners;
      cal = fitHomography(
        [
          { px: tl, mm: { x: 0, y: 0 } },
          { px: tr, mm: { x: w, y: 0 } },
          { px: br, mm: { x: w, y: h } },
          { px: bl, mm: { x: 0, y: h } },
        ],
        opts,
      );
      break;
    }
  }
  if (dto.checks?.length) checkCalibration(cal, dto.checks.map(referenceOf));
  const scale = dto.modelScale ? parseModelScale(dto.modelScale) : null;
  return {
    cal,
    ratio: scale?.ratio ?? 1,
    scaleLabel: scale?.label ?? null,
    pickErrorPx: opts.pickErrorPx,
  };
}
