/** The checks every calibration input passes before any arithmetic uses it. */

import { CalibrationError, type PlanePoint, type ReferenceLength, type SheetPoint } from './types';

export function assertFinitePoint(p: SheetPoint | PlanePoint, what: string): void {
  if (!p || !Number.isFinite(p.x) || !Number.isFinite(p.y)) {
    throw new CalibrationError('invalid-input', `${what} must have finite x and y`, {
      input: what,
    });
  }
}

export function assertLength(ref: ReferenceLength, what: string): number {
  assertFinitePoint(ref.a, `${what} start`);
  assertFinitePoint(ref.b, `${what} end`);
  if (!Number.isFinite(ref.lengthMm) || ref.lengthMm <= 0) {
    throw new CalibrationError('zero-length', `${what} must be a positive length`, { input: what });
  }
  const tol = ref.toleranceMm ?? 0;
  if (!Number.isFinite(tol) || tol < 0) {
    throw new CalibrationError('invalid-input', `${what} tolerance must be 0 or more`, {
      input: what,
    });
  }
  const d = Math.hypot(ref.b.x - ref.a.x, ref.b.y - ref.a.y);
  if (d === 0) {
    throw new CalibrationError('coincident-points', `${what} starts and ends on the same pixel`, {
      input: what,
    });
  }
  return d;
}

export function assertPickError(px: number): number {
  if (!Number.isFinite(px) || px < 0) {
    throw new CalibrationError('invalid-input', 'Pick error must be 0 px or more', {
      input: 'pickErrorPx',
    });
  }
  return px;
}
