/**
 * What calibration works with: points on the sheet and on the real plane, the known lengths and
 * control points a builder picks, the three calibrations and the error they throw.
 */

import { EngineError } from '../errors';

/** A point on the sheet in pixels (x right, y down). */
export interface SheetPoint {
  readonly x: number;
  readonly y: number;
}

/** A point on the real plane in millimetres. */
export interface PlanePoint {
  readonly x: number;
  readonly y: number;
}

/** A length the builder knows, picked on the sheet between two points. */
export interface ReferenceLength {
  readonly a: SheetPoint;
  readonly b: SheetPoint;
  readonly lengthMm: number;
  /** ± on the known length (a stated dimension's tolerance); 0 when exact. */
  readonly toleranceMm?: number;
}

/** A sheet point whose real-plane position is known (a corner of a drawing frame, a grid mark). */
export interface ControlPoint {
  readonly px: SheetPoint;
  readonly mm: PlanePoint;
  /** ± on each coordinate of the known position; 0 when exact. */
  readonly toleranceMm?: number;
}

export type CalibrationErrorCode =
  | 'invalid-input'
  | 'zero-length'
  | 'coincident-points'
  | 'too-few-points'
  | 'degenerate-points'
  | 'folded-mapping'
  | 'degenerate-axes'
  | 'point-at-infinity'
  | 'bad-scale';

/** A calibration question that cannot be answered; `details` says which input is at fault. */
export class CalibrationError extends EngineError<CalibrationErrorCode> {
  override readonly name = 'CalibrationError';
  constructor(
    code: CalibrationErrorCode,
    message: string,
    readonly details: { readonly points?: readonly number[]; readonly input?: string } = {},
  ) {
    super(code, message, details);
  }
}

/** Default ± pick error of one point, in pixels (check-values §12.3: 1–3 px at 300–600 dpi). */
export const DEFAULT_PICK_ERROR_PX = 2;

export interface TwoPointCalibration {
  readonly kind: 'two-point';
  readonly mmPerPx: number;
  /** ± relative uncertainty of the scale from the reference tolerance and its two picks. */
  readonly relativeUncertainty: number;
  readonly reference: ReferenceLength;
  readonly pickErrorPx: number;
}

export interface PerAxisCalibration {
  readonly kind: 'per-axis';
  /** mm per pixel along the sheet's x axis. */
  readonly sx: number;
  /** mm per pixel along the sheet's y axis. */
  readonly sy: number;
  readonly horizontal: ReferenceLength;
  readonly vertical: ReferenceLength;
  readonly pickErrorPx: number;
}

/** A 3×3 matrix, row-major: its nine entries. */
// prettier-ignore
export type Matrix3 = readonly [
  number, number, number,
  number, number, number,
  number, number, number,
];

export interface HomographyCalibration {
  readonly kind: 'homography';
  /** H, row-major, h33 = 1: pixel (x, y, 1) → plane (u·w, v·w, w). */
  readonly matrix: Matrix3;
  /** H⁻¹, row-major, h33 = 1: plane → pixel. */
  readonly inverse: Matrix3;
  readonly controls: readonly ControlPoint[];
  /** Plane-space miss of each control point, mm (all 0 with exactly four points). */
  readonly residualsMm: readonly number[];
  readonly rmsResidualMm: number;
  /** 2N − 8: how many more coordinates were given than the fit needs. */
  readonly redundancy: number;
  readonly pickErrorPx: number;
}

export type SheetCalibration = TwoPointCalibration | PerAxisCalibration | HomographyCalibration;
