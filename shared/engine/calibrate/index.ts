/**
 * Sheet calibration: how pixels on an uploaded sheet map to real millimetres, and how well.
 *
 * Three models, the ones a builder meets (DESIGN.md §5 item 7):
 * - two-point: one known length gives one scale (a clean scan at a stated drawing scale);
 * - per-axis: a known horizontal and a known vertical length give sx and sy (paper that shrank
 *   more across the grain than along it; check-values §12.2);
 * - homography: four or more points with known plane positions (a photograph or a skewed scan),
 *   fitted by the normalised DLT (Hartley & Zisserman, Multiple View Geometry, Alg. 4.2).
 *
 * Pixel coordinates are the sheet's own: x right, y down. Uncertainties here are ± bounds, as a
 * dimension's tolerance is, and independent ones combine root-sum-square, as the RSS stack-up
 * does; a measurement's ± is what the stack-up then carries.
 *
 * One file a concept:
 *
 *   types.ts        points, known lengths, control points, the three calibrations, the error
 *   checks.ts       the input checks every calibration runs first
 *   scale.ts        two-point and per-axis
 *   homography.ts   the perspective fit (normalised DLT) and the maps through it
 *   mapping.ts      pixel → mm under any calibration, and its local Jacobian
 *   measure.ts      check lengths, and the length between two pins with its ±
 *   model-scale.ts  `1:8`, `1½ in to the foot`; prototype lengths brought to the model
 *   straighten.ts   the rotation that levels a picked line
 */

export {
  CalibrationError,
  DEFAULT_PICK_ERROR_PX,
  type CalibrationErrorCode,
  type ControlPoint,
  type HomographyCalibration,
  type PerAxisCalibration,
  type PlanePoint,
  type ReferenceLength,
  type SheetCalibration,
  type SheetPoint,
  type TwoPointCalibration,
} from './types';
export { perAxisScale, twoPointScale } from './scale';
export { applyHomography, fitHomography, planeToSheet } from './homography';
export { localJacobian, sheetToMm } from './mapping';
export {
  checkCalibration,
  measureBetweenPins,
  type CalibrationCheck,
  type PinMeasureOptions,
  type PinMeasurement,
} from './measure';
export { parseModelScale, prototypeToModel, type ModelScale } from './model-scale';
export { rotateSheetPoint, straightenRotation } from './straighten';
