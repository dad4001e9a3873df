/**
 * Perspective calibration: the plane homography pixel → mm fitted from four or more control
 * points by the normalised DLT (Hartley & Zisserman, Multiple View Geometry, Alg. 4.2), and the
 * maps through it both ways.
 */

import { factorDense, TOLERANCES } from '../numeric';
import { assertFinitePoint, assertPickError } from './checks';
import {
  CalibrationError,
  DEFAULT_PICK_ERROR_PX,
  type ControlPoint,
  type HomographyCalibration,
  type Matrix3,
  type PlanePoint,
  type SheetPoint,
} from './types';

/**
 * Solves A·x = b with the engine's one LU solve. Answers undefined when a pivot falls below
 * `relTol` × the largest entry: the points do not fix the unknowns.
 */
function solveDense(a: number[][], b: number[], relTol: number): number[] | undefined {
  const factor = factorDense(b.length, a.flat(), relTol);
  return factor ? Array.from(factor.solve(b)) : undefined;
}

function mul3(a: Matrix3, b: Matrix3): Matrix3 {
  const out: [...Matrix3] = [0, 0, 0, 0, 0, 0, 0, 0, 0];
  for (let i = 0; i < 3; i++)
    for (let j = 0; j < 3; j++)
      for (let k = 0; k < 3; k++) out[3 * i + j]! += a[3 * i + k]! * b[3 * k + j]!;
  return out;
}

/** Each entry of a 3×3 matrix through `f` (`map` would answer a plain array). */
function map3(m: Matrix3, f: (v: number) => number): Matrix3 {
  const [a, b, c, d, e, g, h, i, j] = m;
  return [f(a), f(b), f(c), f(d), f(e), f(g), f(h), f(i), f(j)];
}

function invert3(m: Matrix3): Matrix3 | undefined {
  const [a, b, c, d, e, f, g, h, i] = m;
  // Cofactors, transposed: the adjugate, row-major.
  // prettier-ignore
  const co: Matrix3 = [
    e * i - f * h, c * h - b * i, b * f - c * e,
    f * g - d * i, a * i - c * g, c * d - a * f,
    d * h - e * g, b * g - a * h, a * e - b * d,
  ];
  const det = a * co[0] + b * co[3] + c * co[6];
  if (!Number.isFinite(det) || det === 0) return undefined;
  return map3(co, (v) => v / det);
}

function scaleToUnitCorner(m: Matrix3): Matrix3 {
  return map3(m, (v) => v / m[8]);
}

/**
 * Hartley normalisation: move the centroid to the origin and scale so the mean distance from
 * it is √2. Conditioning the DLT this way is what makes its answer trustworthy in pixels of
 * order 10³ (Hartley & Zisserman §4.4).
 */
function normaliser(points: readonly (SheetPoint | PlanePoint)[]): Matrix3 {
  const n = points.length;
  const cx = points.reduce((s, p) => s + p.x, 0) / n;
  const cy = points.reduce((s, p) => s + p.y, 0) / n;
  const mean = points.reduce((s, p) => s + Math.hypot(p.x - cx, p.y - cy), 0) / n;
  const k = mean > 0 ? Math.SQRT2 / mean : 1;
  return [k, 0, -k * cx, 0, k, -k * cy, 0, 0, 1];
}

function applyMat(m: Matrix3, p: SheetPoint | PlanePoint): { x: number; y: number; w: number } {
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
        const [p, q, r] = [points[i]!, points[j]!, points[k]!];
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
  type Point = { x: number; y: number };
  const area = (p: Point, q: Point, r: Point) =>
    ((q.x - p.x) * (r.y - p.y) - (q.y - p.y) * (r.x - p.x)) / 2;
  let sense = 0;
  for (let i = 0; i < src.length; i++)
    for (let j = i + 1; j < src.length; j++)
      for (let k = j + 1; k < src.length; k++) {
        const a = area(src[i]!, src[j]!, src[k]!);
        const b = area(dst[i]!, dst[j]!, dst[k]!);
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
    const q = nd[i]!; // ns and nd are the same controls, sheet and plane side
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
      Array.from({ length: 8 }, (_, j) => rows.reduce((s, r) => s + r[i]! * r[j]!, 0)),
    );
    const atb = Array.from({ length: 8 }, (_, i) =>
      rows.reduce((s, r, k) => s + r[i]! * rhs[k]!, 0),
    );
    h = solveDense(ata, atb, TOLERANCES.normalEquationsPivot);
  }
  if (!h) {
    throw new CalibrationError(
      'degenerate-points',
      'These points do not fix a perspective: at least four must be spread out with no three in line',
      { points: controls.map((_, i) => i) },
    );
  }
  const tdInv = invert3(td)!; // a normaliser scales by k > 0: always invertible
  // The eight unknowns of the 8-column solve, and h33 = 1.
  const dlt: Matrix3 = [h[0]!, h[1]!, h[2]!, h[3]!, h[4]!, h[5]!, h[6]!, h[7]!, 1];
  const matrix = scaleToUnitCorner(mul3(mul3(tdInv, dlt), ts));
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

export function applyChecked(m: Matrix3, p: SheetPoint | PlanePoint): PlanePoint {
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
