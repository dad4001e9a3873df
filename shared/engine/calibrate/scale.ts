/** Two-point and per-axis calibration: one scale, or one scale along each sheet axis. */

import { TOLERANCES } from '../numeric';
import { assertLength, assertPickError } from './checks';
import {
  CalibrationError,
  DEFAULT_PICK_ERROR_PX,
  type PerAxisCalibration,
  type ReferenceLength,
  type TwoPointCalibration,
} from './types';

/**
 * Scale from one known length picked on the sheet.
 *
 * @example
 * twoPointScale({ a: { x: 0, y: 0 }, b: { x: 300, y: 400 }, lengthMm: 100 }).mmPerPx // 0.2
 */
export function twoPointScale(
  reference: ReferenceLength,
  options: { pickErrorPx?: number } = {},
): TwoPointCalibration {
  const pickErrorPx = assertPickError(options.pickErrorPx ?? DEFAULT_PICK_ERROR_PX);
  const d = assertLength(reference, 'Reference length');
  const tol = reference.toleranceMm ?? 0;
  // Along the line each end's pick error moves the pixel length by σ; two ends combine RSS.
  const relativeUncertainty = Math.hypot(tol / reference.lengthMm, (Math.SQRT2 * pickErrorPx) / d);
  return {
    kind: 'two-point',
    mmPerPx: reference.lengthMm / d,
    relativeUncertainty,
    reference,
    pickErrorPx,
  };
}

/**
 * Separate x and y scales from a known horizontal and a known vertical length. The model is
 * L² = sx²·dx² + sy²·dy², linear in sx² and sy², so references picked slightly off-axis are
 * used exactly rather than by their dominant component.
 *
 * @example
 * perAxisScale({
 *   horizontal: { a: { x: 0, y: 0 }, b: { x: 1000, y: 0 }, lengthMm: 200 },
 *   vertical: { a: { x: 0, y: 0 }, b: { x: 0, y: 500 }, lengthMm: 101 },
 * }) // { sx: 0.2, sy: 0.202, … }
 */
export function perAxisScale(
  refs: { readonly horizontal: ReferenceLength; readonly vertical: ReferenceLength },
  options: { pickErrorPx?: number } = {},
): PerAxisCalibration {
  const pickErrorPx = assertPickError(options.pickErrorPx ?? DEFAULT_PICK_ERROR_PX);
  assertLength(refs.horizontal, 'Horizontal reference');
  assertLength(refs.vertical, 'Vertical reference');
  const [h, v] = [refs.horizontal, refs.vertical];
  const hx = (h.b.x - h.a.x) ** 2;
  const hy = (h.b.y - h.a.y) ** 2;
  const vx = (v.b.x - v.a.x) ** 2;
  const vy = (v.b.y - v.a.y) ** 2;
  const det = hx * vy - hy * vx;
  // The two references must run in clearly different directions; parallel ones say nothing
  // about the other axis.
  if (Math.abs(det) <= TOLERANCES.parallelReferences * (hx + hy) * (vx + vy)) {
    throw new CalibrationError(
      'degenerate-axes',
      'The horizontal and vertical references run the same way; pick one along each axis',
      { input: 'per-axis' },
    );
  }
  const [lh, lv] = [h.lengthMm ** 2, v.lengthMm ** 2];
  const sx2 = (lh * vy - hy * lv) / det;
  const sy2 = (hx * lv - lh * vx) / det;
  if (!(sx2 > 0 && sy2 > 0)) {
    throw new CalibrationError(
      'degenerate-axes',
      'No positive x and y scales fit these two references; check which is horizontal',
      { input: 'per-axis' },
    );
  }
  return {
    kind: 'per-axis',
    sx: Math.sqrt(sx2),
    sy: Math.sqrt(sy2),
    horizontal: h,
    vertical: v,
    pickErrorPx,
  };
}
