/** Sheet pixels to real millimetres under any of the three calibrations, and the local scale. */

import { assertFinitePoint } from './checks';
import { applyChecked, applyHomography } from './homography';
import type { PlanePoint, SheetCalibration, SheetPoint } from './types';

/**
 * Maps a sheet pixel to real millimetres under any calibration. Two-point and per-axis keep
 * the sheet's origin and axes; a homography answers in the plane its control points define.
 *
 * @example sheetToMm(twoPointScale(ref), { x: 10, y: 0 }) // { x: 10·mmPerPx, y: 0 }
 */
export function sheetToMm(cal: SheetCalibration, p: SheetPoint): PlanePoint {
  assertFinitePoint(p, 'Point');
  switch (cal.kind) {
    case 'two-point':
      return { x: p.x * cal.mmPerPx, y: p.y * cal.mmPerPx };
    case 'per-axis':
      return { x: p.x * cal.sx, y: p.y * cal.sy };
    case 'homography':
      return applyHomography(cal, p);
  }
}

/**
 * Jacobian ∂(mm)/∂(px) of the mapping at a sheet point, row-major [∂X/∂x, ∂X/∂y, ∂Y/∂x, ∂Y/∂y]:
 * the local scale a pick error is multiplied by.
 *
 * @example localJacobian(perAxisScale(refs), { x: 0, y: 0 }) // [sx, 0, 0, sy]
 */
export function localJacobian(
  cal: SheetCalibration,
  p: SheetPoint,
): readonly [number, number, number, number] {
  switch (cal.kind) {
    case 'two-point':
      return [cal.mmPerPx, 0, 0, cal.mmPerPx];
    case 'per-axis':
      return [cal.sx, 0, 0, cal.sy];
    case 'homography': {
      const m = cal.matrix;
      const q = applyChecked(m, p);
      const w = m[6] * p.x + m[7] * p.y + m[8];
      return [
        (m[0] - q.x * m[6]) / w,
        (m[1] - q.x * m[7]) / w,
        (m[3] - q.y * m[6]) / w,
        (m[4] - q.y * m[7]) / w,
      ];
    }
  }
}
