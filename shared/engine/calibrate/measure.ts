/**
 * Measuring under a calibration: extra known lengths checked against it, and the real length
 * between two pins with its ± (the pins' picks, the calibration's own inputs, and a floor).
 */

import { TOLERANCES } from '../numeric';
import { assertFinitePoint, assertLength, assertPickError } from './checks';
import { fitHomography } from './homography';
import { localJacobian, sheetToMm } from './mapping';
import { perAxisScale, twoPointScale } from './scale';
import {
  CalibrationError,
  DEFAULT_PICK_ERROR_PX,
  type ControlPoint,
  type ReferenceLength,
  type SheetCalibration,
  type SheetPoint,
} from './types';

export interface CalibrationCheck {
  readonly measuredMm: number;
  readonly trueMm: number;
  /** measured − true. */
  readonly residualMm: number;
}

/**
 * Measures extra known lengths under a calibration and reports how far each is out, with the
 * RMS: the honest check of a calibration that had more information than it needed.
 *
 * @example
 * // 0.1 mm/px; a 500 px line that should be 50.2 mm reads 50.0 mm
 * checkCalibration(cal, [{ a: { x: 0, y: 0 }, b: { x: 500, y: 0 }, lengthMm: 50.2 }]).rmsMm // 0.2
 */
export function checkCalibration(
  cal: SheetCalibration,
  checks: readonly ReferenceLength[],
): {
  readonly checks: readonly CalibrationCheck[];
  readonly rmsMm: number;
  readonly maxAbsMm: number;
} {
  if (checks.length === 0) {
    throw new CalibrationError('invalid-input', 'Give at least one check length');
  }
  const results = checks.map((c, i) => {
    assertLength(c, `Check length ${i + 1}`);
    const measuredMm = planeDistance(cal, c.a, c.b);
    return { measuredMm, trueMm: c.lengthMm, residualMm: measuredMm - c.lengthMm };
  });
  const rmsMm = Math.sqrt(results.reduce((s, r) => s + r.residualMm ** 2, 0) / results.length);
  const maxAbsMm = Math.max(...results.map((r) => Math.abs(r.residualMm)));
  return { checks: results, rmsMm, maxAbsMm };
}

function planeDistance(cal: SheetCalibration, a: SheetPoint, b: SheetPoint): number {
  const p = sheetToMm(cal, a);
  const q = sheetToMm(cal, b);
  return Math.hypot(q.x - p.x, q.y - p.y);
}

/** One uncertain calibration input: its ± and the calibration rebuilt with it moved by δ. */
interface CalibrationInput {
  readonly sigma: number;
  readonly rebuild: (delta: number) => SheetCalibration;
}

const movePoint = (p: SheetPoint, axis: 'x' | 'y', d: number): SheetPoint =>
  axis === 'x' ? { x: p.x + d, y: p.y } : { x: p.x, y: p.y + d };

function referenceInputs(
  ref: ReferenceLength,
  pickErrorPx: number,
  rebuild: (r: ReferenceLength) => SheetCalibration,
): CalibrationInput[] {
  const inputs: CalibrationInput[] = [];
  for (const end of ['a', 'b'] as const)
    for (const axis of ['x', 'y'] as const)
      inputs.push({
        sigma: pickErrorPx,
        rebuild: (d) => rebuild({ ...ref, [end]: movePoint(ref[end], axis, d) }),
      });
  inputs.push({
    sigma: ref.toleranceMm ?? 0,
    rebuild: (d) => rebuild({ ...ref, lengthMm: ref.lengthMm + d }),
  });
  return inputs;
}

function calibrationInputs(cal: SheetCalibration): CalibrationInput[] {
  const opts = { pickErrorPx: cal.pickErrorPx };
  switch (cal.kind) {
    case 'two-point':
      return referenceInputs(cal.reference, cal.pickErrorPx, (r) => twoPointScale(r, opts));
    case 'per-axis':
      return [
        ...referenceInputs(cal.horizontal, cal.pickErrorPx, (r) =>
          perAxisScale({ horizontal: r, vertical: cal.vertical }, opts),
        ),
        ...referenceInputs(cal.vertical, cal.pickErrorPx, (r) =>
          perAxisScale({ horizontal: cal.horizontal, vertical: r }, opts),
        ),
      ];
    case 'homography': {
      // With redundant points the residuals measure the picks directly; when they are worse
      // than the stated pick error, believe the residuals.
      const j = localJacobian(cal, cal.controls[0]!.px); // a fitted one has four or more
      const mmPerPx = Math.sqrt(Math.abs(j[0] * j[3] - j[1] * j[2]));
      const residualPx = cal.redundancy > 0 && mmPerPx > 0 ? cal.rmsResidualMm / mmPerPx : 0;
      const pickPx = Math.max(cal.pickErrorPx, residualPx);
      const refit = (controls: ControlPoint[]) => fitHomography(controls, opts);
      const inputs: CalibrationInput[] = [];
      cal.controls.forEach((c, i) => {
        const replace = (next: ControlPoint) => cal.controls.map((o, k) => (k === i ? next : o));
        for (const axis of ['x', 'y'] as const) {
          inputs.push({
            sigma: pickPx,
            rebuild: (d) => refit(replace({ ...c, px: movePoint(c.px, axis, d) })),
          });
          inputs.push({
            sigma: c.toleranceMm ?? 0,
            rebuild: (d) => refit(replace({ ...c, mm: movePoint(c.mm, axis, d) })),
          });
        }
      });
      return inputs;
    }
  }
}

export interface PinMeasurement {
  readonly lengthMm: number;
  /** ± on the length: max(floor, √(pick² + calibration²)). */
  readonly uncertaintyMm: number;
  /** ± from the two pins' own pick error through the local Jacobian. */
  readonly pickMm: number;
  /** ± from the calibration's inputs (reference tolerances and their picks). */
  readonly calibrationMm: number;
  /** The least ± a scaled value is given: max(floorFraction·L, floorPx at the local scale). */
  readonly floorMm: number;
  readonly limitedByFloor: boolean;
}

export interface PinMeasureOptions {
  /** ± pick error of each pin, px. Default 2 (check-values §12.3). */
  readonly pickErrorPx?: number;
  /** Floor as a fraction of the length. Default 0.005 (check-values §12.3, 0.5 %). */
  readonly floorFraction?: number;
  /** Floor in pixels at the local scale. Default 2 (check-values §12.3). */
  readonly floorPx?: number;
}

/**
 * The real length between two pins and its ±. Three parts:
 * - the pins' pick error (default ±2 px each) through the mapping's local Jacobian;
 * - the calibration's own uncertainty: each of its inputs (reference tolerance, reference picks,
 *   control points) moved by its ± and the length re-measured (first-order, central
 *   differences), combined RSS;
 * - a floor, because a length scaled off a drawing is never better than the drawing: the
 *   reference's test tolerance for scaled values, max(0.5 % of the length, 2 px)
 *   (check-values §12.3), with the 2 px taken at the local scale along the measurement.
 *
 * @example
 * const cal = twoPointScale({ a: { x: 0, y: 0 }, b: { x: 1000, y: 0 }, lengthMm: 100 });
 * measureBetweenPins(cal, { x: 0, y: 0 }, { x: 500, y: 0 }) // { lengthMm: 50, uncertaintyMm: 0.32, … }
 */
export function measureBetweenPins(
  cal: SheetCalibration,
  a: SheetPoint,
  b: SheetPoint,
  options: PinMeasureOptions = {},
): PinMeasurement {
  const pickErrorPx = assertPickError(options.pickErrorPx ?? DEFAULT_PICK_ERROR_PX);
  const floorFraction = options.floorFraction ?? 0.005;
  const floorPx = options.floorPx ?? 2;
  if (!(floorFraction >= 0) || !(floorPx >= 0)) {
    throw new CalibrationError('invalid-input', 'Floors must be 0 or more', { input: 'floor' });
  }
  assertFinitePoint(a, 'First pin');
  assertFinitePoint(b, 'Second pin');
  const dPx = Math.hypot(b.x - a.x, b.y - a.y);
  if (dPx === 0) {
    throw new CalibrationError('coincident-points', 'Both pins are on the same pixel');
  }
  const pa = sheetToMm(cal, a);
  const pb = sheetToMm(cal, b);
  const lengthMm = Math.hypot(pb.x - pa.x, pb.y - pa.y);
  const [ux, uy] = [(pb.x - pa.x) / lengthMm, (pb.y - pa.y) / lengthMm];

  // ∂L/∂(pin px) = ±uᵀJ at each end; isotropic pick error per coordinate, the two ends RSS.
  const gradient = (p: SheetPoint) => {
    const j = localJacobian(cal, p);
    return Math.hypot(ux * j[0] + uy * j[2], ux * j[1] + uy * j[3]);
  };
  const pickMm = pickErrorPx * Math.hypot(gradient(a), gradient(b));

  let calibrationVar = 0;
  for (const input of calibrationInputs(cal)) {
    if (input.sigma === 0) continue;
    const h = input.sigma * TOLERANCES.finiteDifferenceStep;
    const slope =
      (planeDistance(input.rebuild(h), a, b) - planeDistance(input.rebuild(-h), a, b)) / (2 * h);
    calibrationVar += (slope * input.sigma) ** 2;
  }
  const calibrationMm = Math.sqrt(calibrationVar);

  // Local mm per px along the measured direction, averaged over the two ends.
  const [ex, ey] = [(b.x - a.x) / dPx, (b.y - a.y) / dPx];
  const along = (p: SheetPoint) => {
    const j = localJacobian(cal, p);
    return Math.hypot(j[0] * ex + j[1] * ey, j[2] * ex + j[3] * ey);
  };
  const floorMm = Math.max(floorFraction * lengthMm, (floorPx * (along(a) + along(b))) / 2);
  const combined = Math.hypot(pickMm, calibrationMm);
  return {
    lengthMm,
    uncertaintyMm: Math.max(floorMm, combined),
    pickMm,
    calibrationMm,
    floorMm,
    limitedByFloor: floorMm > combined,
  };
}
