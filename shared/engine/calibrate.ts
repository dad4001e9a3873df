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
 */

import { MM_PER_FT, MM_PER_IN } from './length';
import { EngineError } from './errors';
import { factorDense, TOLERANCES } from './numeric';
import { parseMixedNumber } from './quantity';

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

export interface HomographyCalibration {
  readonly kind: 'homography';
  /** H, row-major, h33 = 1: pixel (x, y, 1) → plane (u·w, v·w, w). */
  readonly matrix: readonly number[];
  /** H⁻¹, row-major, h33 = 1: plane → pixel. */
  readonly inverse: readonly number[];
  readonly controls: readonly ControlPoint[];
  /** Plane-space miss of each control point, mm (all 0 with exactly four points). */
  readonly residualsMm: readonly number[];
  readonly rmsResidualMm: number;
  /** 2N − 8: how many more coordinates were given than the fit needs. */
  readonly redundancy: number;
  readonly pickErrorPx: number;
}

export type SheetCalibration = TwoPointCalibration | PerAxisCalibration | HomographyCalibration;

// ---------------------------------------------------------------------------------------------
// Input checks

function assertFinitePoint(p: SheetPoint | PlanePoint, what: string): void {
  if (!p || !Number.isFinite(p.x) || !Number.isFinite(p.y)) {
    throw new CalibrationError('invalid-input', `${what} must have finite x and y`, {
      input: what,
    });
  }
}

function assertLength(ref: ReferenceLength, what: string): number {
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

function assertPickError(px: number): number {
  if (!Number.isFinite(px) || px < 0) {
    throw new CalibrationError('invalid-input', 'Pick error must be 0 px or more', {
      input: 'pickErrorPx',
    });
  }
  return px;
}

// ---------------------------------------------------------------------------------------------
// Two-point and per-axis

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

// ---------------------------------------------------------------------------------------------
// Homography (normalised DLT)

type Mat3 = readonly number[];

/**
 * Solves A·x = b with the engine's one LU solve. Answers undefined when a pivot falls below
 * `relTol` × the largest entry: the points do not fix the unknowns.
 */
function solveDense(a: number[][], b: number[], relTol: number): number[] | undefined {
  const factor = factorDense(b.length, a.flat(), relTol);
  return factor ? Array.from(factor.solve(b)) : undefined;
}

function mul3(a: Mat3, b: Mat3): number[] {
  const out = new Array<number>(9).fill(0);
  for (let i = 0; i < 3; i++)
    for (let j = 0; j < 3; j++)
      for (let k = 0; k < 3; k++) out[3 * i + j] += a[3 * i + k] * b[3 * k + j];
  return out;
}

function invert3(m: Mat3): number[] | undefined {
  const [a, b, c, d, e, f, g, h, i] = m;
  // Cofactors, transposed: the adjugate, row-major.
  // prettier-ignore
  const co = [
    e * i - f * h, c * h - b * i, b * f - c * e,
    f * g - d * i, a * i - c * g, c * d - a * f,
    d * h - e * g, b * g - a * h, a * e - b * d,
  ];
  const det = a * co[0] + b * co[3] + c * co[6];
  if (!Number.isFinite(det) || det === 0) return undefined;
  return co.map((v) => v / det);
}

function scaleToUnitCorner(m: number[]): number[] {
  return m.map((v) => v / m[8]);
}

/**
 * Hartley normalisation: move the centroid to the origin and scale so the mean distance from
 * it is √2. Conditioning the DLT this way is what makes its answer trustworthy in pixels of
 * order 10³ (Hartley & Zisserman §4.4).
 */
function normaliser(points: readonly (SheetPoint | PlanePoint)[]): number[] {
  const n = points.length;
  const cx = points.reduce((s, p) => s + p.x, 0) / n;
  const cy = points.reduce((s, p) => s + p.y, 0) / n;
  const mean = points.reduce((s, p) => s + Math.hypot(p.x - cx, p.y - cy), 0) / n;
  const k = mean > 0 ? Math.SQRT2 / mean : 1;
  return [k, 0, -k * cx, 0, k, -k * cy, 0, 0, 1];
}

function applyMat(m: Mat3, p: SheetPoint | PlanePoint): { x: number; y: number; w: number } {
  const w = m[6] * p.x + m[7] * p.y + m[8];
  return {
    x: (m[0] * p.x + m[1] * p.y + m[2]) / w,
    y: (m[3] * p.x + m[4] * p.y + m[5]) / w,
    w,
  };
}

// In normalised coordinates (mean distance √2), a triangle this small is a straight line.
const COLLINEAR_AREA = TOLERANCES.collinearArea;

function findCollinearTriple(points: readonly { x: number; y: number }[]): number[] | undefined {
  for (let i = 0; i < points.length; i++)
    for (let j = i + 1; j < points.length; j++)
      for (let k = j + 1; k < points.length; k++) {
        const [p, q, r] = [points[i], points[j], points[k]];
        const cross = (q.x - p.x) * (r.y - p.y) - (q.y - p.y) * (r.x - p.x);
        if (Math.abs(cross) / 2 < COLLINEAR_AREA) return [i, j, k];
      }
  return undefined;
}

// A triangle this large (normalised units) cannot change its turning sense through pick noise.
const ORIENTATION_AREA = 0.05;

/**
 * A projective map that keeps every point on one side of the horizon line turns every triangle
 * the same way, or every one the opposite way (det[Hp] = det H · w₁w₂w₃ · det[q]). A triangle
 * whose sense disagrees with the first firm one means the points were matched in a crossed
 * order — checked before solving, because the crossed case also puts the centroid at infinity,
 * where the h33 = 1 solve would only report a singular system.
 */
function findCrossedOrder(
  src: readonly { x: number; y: number }[],
  dst: readonly { x: number; y: number }[],
): number[] | undefined {
  const area = (p: { x: number; y: number }[]) =>
    ((p[1].x - p[0].x) * (p[2].y - p[0].y) - (p[1].y - p[0].y) * (p[2].x - p[0].x)) / 2;
  let sense = 0;
  for (let i = 0; i < src.length; i++)
    for (let j = i + 1; j < src.length; j++)
      for (let k = j + 1; k < src.length; k++) {
        const a = area([src[i], src[j], src[k]]);
        const b = area([dst[i], dst[j], dst[k]]);
        if (Math.abs(a) < ORIENTATION_AREA || Math.abs(b) < ORIENTATION_AREA) continue;
        const s = Math.sign(a) * Math.sign(b);
        if (sense === 0) sense = s;
        else if (s !== sense) return [i, j, k];
      }
  return undefined;
}

/**
 * Fits the plane homography pixel → mm from four or more control points by the normalised DLT
 * with h33 = 1: exactly four points solve the 8×8 system; more are fitted by least squares
 * (normal equations) and their plane-space residuals reported.
 *
 * h33 = 1 is safe after normalisation: it fails only if the centroid of the picked points maps
 * to infinity, which no photograph of a plane can do (a crossed point order can, and is refused
 * first with its own error).
 *
 * @example
 * const cal = fitHomography([
 *   { px: { x: 0, y: 0 }, mm: { x: 0, y: 0 } }, { px: { x: 1, y: 0 }, mm: { x: 2, y: 0 } },
 *   { px: { x: 1, y: 1 }, mm: { x: 1.5, y: 1 } }, { px: { x: 0, y: 1 }, mm: { x: 0.5, y: 1 } },
 * ]);
 * applyHomography(cal, { x: 0.5, y: 0.5 }) // { x: 1, y: 0.6667 }
 */
export function fitHomography(
  controls: readonly ControlPoint[],
  options: { pickErrorPx?: number } = {},
): HomographyCalibration {
  const pickErrorPx = assertPickError(options.pickErrorPx ?? DEFAULT_PICK_ERROR_PX);
  if (controls.length < 4) {
    throw new CalibrationError(
      'too-few-points',
      `A perspective calibration needs at least 4 points, not ${controls.length}`,
    );
  }
  controls.forEach((c, i) => {
    assertFinitePoint(c.px, `Point ${i + 1} (sheet)`);
    assertFinitePoint(c.mm, `Point ${i + 1} (plane)`);
    const tol = c.toleranceMm ?? 0;
    if (!Number.isFinite(tol) || tol < 0) {
      throw new CalibrationError('invalid-input', `Point ${i + 1} tolerance must be 0 or more`, {
        points: [i],
      });
    }
  });
  const src = controls.map((c) => c.px);
  const dst = controls.map((c) => c.mm);
  const ts = normaliser(src);
  const td = normaliser(dst);
  const ns = src.map((p) => applyMat(ts, p));
  const nd = dst.map((p) => applyMat(td, p));

  if (controls.length === 4) {
    for (const [pts, where] of [
      [ns, 'sheet'],
      [nd, 'plane'],
    ] as const) {
      const triple = findCollinearTriple(pts);
      if (triple) {
        throw new CalibrationError(
          'degenerate-points',
          `Points ${triple.map((i) => i + 1).join(', ')} lie on one line on the ${where}; ` +
            'a perspective calibration needs four points with no three in line',
          { points: triple },
        );
      }
    }
  }

  const crossed = findCrossedOrder(ns, nd);
  if (crossed) {
    throw new CalibrationError(
      'folded-mapping',
      `Points ${crossed.map((i) => i + 1).join(', ')} go round one way on the sheet and the ` +
        'other way on the plane; match the points in the same order',
      { points: crossed },
    );
  }

  // Two DLT rows per point: [x y 1 0 0 0 −ux −uy]·h = u and [0 0 0 x y 1 −vx −vy]·h = v.
  const rows: number[][] = [];
  const rhs: number[] = [];
  ns.forEach((p, i) => {
    const q = nd[i];
    rows.push([p.x, p.y, 1, 0, 0, 0, -q.x * p.x, -q.x * p.y]);
    rhs.push(q.x);
    rows.push([0, 0, 0, p.x, p.y, 1, -q.y * p.x, -q.y * p.y]);
    rhs.push(q.y);
  });
  let h: number[] | undefined;
  if (controls.length === 4) {
    h = solveDense(rows, rhs, TOLERANCES.singularPivot);
  } else {
    // Normal equations AᵀA·h = Aᵀb: squares the condition number, which the normalisation
    // above keeps small (order 10 for sensible point spreads).
    const ata = Array.from({ length: 8 }, (_, i) =>
      Array.from({ length: 8 }, (_, j) => rows.reduce((s, r) => s + r[i] * r[j], 0)),
    );
    const atb = Array.from({ length: 8 }, (_, i) => rows.reduce((s, r, k) => s + r[i] * rhs[k], 0));
    h = solveDense(ata, atb, TOLERANCES.normalEquationsPivot);
  }
  if (!h) {
    throw new CalibrationError(
      'degenerate-points',
      'These points do not fix a perspective: at least four must be spread out with no three in line',
      { points: controls.map((_, i) => i) },
    );
  }
  const tdInv = invert3(td) as number[];
  const matrix = scaleToUnitCorner(mul3(mul3(tdInv, [...h, 1]), ts));
  const inverse = invert3(matrix);
  if (!inverse || !matrix.every(Number.isFinite)) {
    throw new CalibrationError('degenerate-points', 'These points do not fix a perspective', {
      points: controls.map((_, i) => i),
    });
  }
  // A photograph of a plane keeps every picked point on one side of the horizon line (w of one
  // sign); the orientation check above catches nearly all crossed orders, this the rest.
  const ws = src.map((p) => applyMat(matrix, p).w);
  if (!(ws.every((w) => w > 0) || ws.every((w) => w < 0))) {
    throw new CalibrationError(
      'folded-mapping',
      'The sheet and plane points are in a crossed order; match the corners going round the same way',
      { points: controls.map((_, i) => i) },
    );
  }
  const residualsMm = controls.map((c) => {
    const m = applyMat(matrix, c.px);
    return Math.hypot(m.x - c.mm.x, m.y - c.mm.y);
  });
  const rmsResidualMm = Math.sqrt(residualsMm.reduce((s, r) => s + r * r, 0) / residualsMm.length);
  return {
    kind: 'homography',
    matrix,
    inverse: scaleToUnitCorner(inverse),
    controls,
    residualsMm,
    rmsResidualMm,
    redundancy: 2 * controls.length - 8,
    pickErrorPx,
  };
}

function applyChecked(m: Mat3, p: SheetPoint | PlanePoint): PlanePoint {
  assertFinitePoint(p, 'Point');
  const q = applyMat(m, p);
  const scale = Math.abs(m[6] * p.x) + Math.abs(m[7] * p.y) + Math.abs(m[8]);
  if (
    Math.abs(q.w) <= TOLERANCES.horizonW * scale ||
    !Number.isFinite(q.x) ||
    !Number.isFinite(q.y)
  ) {
    throw new CalibrationError('point-at-infinity', 'This point maps to the horizon line', {
      input: `${p.x}, ${p.y}`,
    });
  }
  return { x: q.x, y: q.y };
}

/**
 * Maps a sheet pixel to the real plane through a fitted homography.
 *
 * @example applyHomography(cal, { x: 250, y: 120 }) // { x: 117.275…, y: 530.920… }
 */
export function applyHomography(cal: HomographyCalibration, p: SheetPoint): PlanePoint {
  return applyChecked(cal.matrix, p);
}

/**
 * Maps a real-plane point back to the sheet (to draw a known feature over the photo).
 *
 * @example planeToSheet(cal, { x: 130, y: 570 }) // { x: 338.99…, y: 278.65… }
 */
export function planeToSheet(cal: HomographyCalibration, p: PlanePoint): SheetPoint {
  return applyChecked(cal.inverse, p);
}

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
export function localJacobian(cal: SheetCalibration, p: SheetPoint): readonly number[] {
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

// ---------------------------------------------------------------------------------------------
// Residuals and measurement

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
      const j = localJacobian(cal, cal.controls[0].px);
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

// ---------------------------------------------------------------------------------------------
// Model scale

export interface ModelScale {
  /** model / full size: 1:8 → 0.125. */
  readonly ratio: number;
  /** As builders write it: `1:8`. */
  readonly label: string;
}

function formatRatioLabel(ratio: number): string {
  if (ratio >= 1) return `${Number(ratio.toPrecision(6))}:1`;
  return `1:${Number((1 / ratio).toPrecision(6))}`;
}

const NUM = String.raw`(\d*\s*[½¼¾⅛⅜⅝⅞⅓⅔⅙⅚⅕]|\d+[\s-]+\d+\/\d+|\d+\/\d+|\d+(?:\.\d*)?|\.\d+)`;
const RATIO_RE = new RegExp(String.raw`^${NUM}\s*[:/]\s*${NUM}$`);
const PER_FOOT_RE = new RegExp(
  String.raw`^${NUM}\s*(mm|millimet(?:re|er)s?|in(?:ch(?:es)?)?\.?|")\s*` +
    String.raw`(?:(?:to|=|per)\s*(?:(?:the|a|one|1)\s*)?(?:foot|feet|ft\.?|')|scale)$`,
  'i',
);

/**
 * Reads a model scale as builders write it and answers the ratio model / full size:
 * `1:8`, `1/8`, `1:11.3`, `2:1`, `1½ in to the foot`, `1 1/2" to 1 ft`, `3/4 in = 1 ft`,
 * `3/4" scale`, `7 mm to the foot`.
 *
 * @example parseModelScale('1½ in to the foot').ratio // 0.125
 * @example parseModelScale('1:11.3').ratio // 0.0885
 */
export function parseModelScale(text: string): ModelScale {
  const t = text.trim().replace(/\s+/g, ' ').replace(/[″]/g, '"').replace(/[′]/g, "'");
  let ratio: number | undefined;
  const r = RATIO_RE.exec(t);
  const f = r ? null : PER_FOOT_RE.exec(t);
  if (r) {
    const [m, full] = [parseMixedNumber(r[1]), parseMixedNumber(r[2])];
    if (m !== undefined && full !== undefined && full > 0) ratio = m / full;
  } else if (f) {
    const n = parseMixedNumber(f[1]);
    const unitMm = /^m/i.test(f[2]) ? 1 : MM_PER_IN;
    if (n !== undefined) ratio = (n * unitMm) / MM_PER_FT;
  }
  if (ratio === undefined || !Number.isFinite(ratio) || ratio <= 0) {
    throw new CalibrationError(
      'bad-scale',
      `"${text}" is not a model scale (e.g. 1:8, 1/8, 1½ in to the foot, 3/4 in = 1 ft)`,
      { input: text },
    );
  }
  return { ratio, label: formatRatioLabel(ratio) };
}

/**
 * A length measured on a photo of the full-size prototype, brought to the model: both the
 * length and its ± are multiplied by the ratio (divided by 8 at 1:8).
 *
 * @example prototypeToModel({ lengthMm: 800, uncertaintyMm: 8 }, 1 / 8) // { lengthMm: 100, uncertaintyMm: 1 }
 */
export function prototypeToModel(
  measurement: { readonly lengthMm: number; readonly uncertaintyMm: number },
  ratio: number,
): { readonly lengthMm: number; readonly uncertaintyMm: number } {
  if (!Number.isFinite(ratio) || ratio <= 0) {
    throw new CalibrationError('bad-scale', `A model scale must be a positive ratio, not ${ratio}`);
  }
  return {
    lengthMm: measurement.lengthMm * ratio,
    uncertaintyMm: measurement.uncertaintyMm * ratio,
  };
}

// ---------------------------------------------------------------------------------------------
// Straighten

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
