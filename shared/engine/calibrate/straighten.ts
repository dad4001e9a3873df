/** Levelling a sheet: the rotation that makes a picked line level or plumb. */

import { assertFinitePoint } from './checks';
import { CalibrationError, type SheetPoint } from './types';

/**
 * The rotation that makes a picked line level (or plumb). Angles are in the sheet's frame
 * (y down), so a positive angle turns clockwise on screen — the sense a canvas `rotation` uses.
 * The line's direction is folded to (−90°, 90°], so picking it right-to-left gives the same
 * answer; rotating the sheet by `rotationDeg` about any point levels the line.
 *
 * @example straightenRotation({ x: 0, y: 0 }, { x: 100, y: 5 }).rotationDeg // ≈ −2.862
 */
export function straightenRotation(
  a: SheetPoint,
  b: SheetPoint,
  target: 'level' | 'plumb' = 'level',
): { readonly angleDeg: number; readonly rotationDeg: number } {
  assertFinitePoint(a, 'Line start');
  assertFinitePoint(b, 'Line end');
  if (a.x === b.x && a.y === b.y) {
    throw new CalibrationError('coincident-points', 'A line needs two different points');
  }
  const raw = (Math.atan2(b.y - a.y, b.x - a.x) * 180) / Math.PI - (target === 'plumb' ? 90 : 0);
  let angleDeg = ((raw % 180) + 180) % 180; // [0, 180)
  if (angleDeg > 90) angleDeg -= 180; // (−90, 90]
  return { angleDeg, rotationDeg: angleDeg === 0 ? 0 : -angleDeg };
}

/**
 * Rotates a sheet point about a centre by `deg` in the sheet's frame (clockwise on screen).
 *
 * @example rotateSheetPoint({ x: 1, y: 0 }, { x: 0, y: 0 }, 90) // { x: 0, y: 1 }
 */
export function rotateSheetPoint(p: SheetPoint, centre: SheetPoint, deg: number): SheetPoint {
  const t = (deg * Math.PI) / 180;
  const [c, s] = [Math.cos(t), Math.sin(t)];
  const [dx, dy] = [p.x - centre.x, p.y - centre.y];
  return { x: centre.x + c * dx - s * dy, y: centre.y + s * dx + c * dy };
}
