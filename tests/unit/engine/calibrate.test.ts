import fc from 'fast-check';
import { Matrix, SingularValueDecomposition, inverse, solve } from 'ml-matrix';
import { describe, expect, it } from 'vitest';
import {
  CalibrationError,
  applyHomography,
  checkCalibration,
  fitHomography,
  localJacobian,
  measureBetweenPins,
  parseModelScale,
  perAxisScale,
  planeToSheet,
  prototypeToModel,
  rotateSheetPoint,
  sheetToMm,
  straightenRotation,
  twoPointScale,
  type CalibrationErrorCode,
  type ControlPoint,
  type HomographyCalibration,
  type SheetPoint,
} from '@shared/engine/calibrate';

function codeOf(fn: () => unknown): CalibrationErrorCode | undefined {
  try {
    fn();
  } catch (e) {
    if (e instanceof CalibrationError) return e.code;
    throw e;
  }
  return undefined;
}

const pt = (x: number, y: number): SheetPoint => ({ x, y });
/** A control point as a row: sheet pixels (x, y), then plane millimetres (u, v). */
type Row = readonly [x: number, y: number, u: number, v: number];
const controls = (rows: readonly Row[]): ControlPoint[] =>
  rows.map(([x, y, u, v]) => ({ px: { x, y }, mm: { x: u, y: v } }));

/** Seeded PRNG (mulberry32) and Box–Muller normals, so noisy cases are the same every run. */
function normals(seed: number) {
  let s = seed >>> 0;
  const uniform = () => {
    s = (s + 0x6d2b79f5) >>> 0;
    let t = s;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
  return () => Math.sqrt(-2 * Math.log(1 - uniform())) * Math.cos(2 * Math.PI * uniform());
}

/** Oracle: the unnormalised 8×8 DLT system solved by ml-matrix (LU), h33 = 1. */
function oracleHomography(rows: readonly Row[]): number[] {
  const a: number[][] = [];
  const b: number[] = [];
  for (const [x, y, u, v] of rows) {
    a.push([x, y, 1, 0, 0, 0, -u * x, -u * y]);
    b.push(u);
    a.push([0, 0, 0, x, y, 1, -v * x, -v * y]);
    b.push(v);
  }
  return [...solve(new Matrix(a), Matrix.columnVector(b)).to1DArray(), 1];
}

function applyH(h: readonly number[], x: number, y: number): [number, number] {
  const w = h[6]! * x + h[7]! * y + h[8]!;
  return [(h[0]! * x + h[1]! * y + h[2]!) / w, (h[3]! * x + h[4]! * y + h[5]!) / w];
}

// check-values §8.1 [published] README of npm perspective-transform 1.1.3 (jlouthan).
const README_SRC = [158, 64, 494, 69, 495, 404, 158, 404];
const README_DST = [100, 500, 152, 564, 148, 604, 100, 560];
const README_ROWS = [0, 1, 2, 3].map((i): Row => [
  README_SRC[2 * i]!,
  README_SRC[2 * i + 1]!,
  README_DST[2 * i]!,
  README_DST[2 * i + 1]!,
]);
const README_COEFFS = [
  0.3869749384, 0.0426817448, 59.2427947969, 0.9589610618, 0.4562821238, 434.8644299345,
  0.0012901794, 0.0004268174, 1,
]; // [published] perspective-transform README `coeffs`
const README_COEFFS_INV = [
  1.9955408809, -0.1282507787, -62.4497171511, -2.9335671323, 2.2894572644, -821.8108124927,
  -0.0013225082, -0.0008117138, 1,
]; // [published] perspective-transform README `coeffsInv`

describe('twoPointScale', () => {
  it('scales a 3-4-5 pick of 500 px to 100 mm at exactly 0.2 mm/px', () => {
    const cal = twoPointScale({ a: pt(0, 0), b: pt(300, 400), lengthMm: 100 });
    expect(cal.mmPerPx).toBeCloseTo(0.2, 14);
    const p = sheetToMm(cal, pt(50, -25));
    expect(p.x).toBeCloseTo(10, 12);
    expect(p.y).toBeCloseTo(-5, 12);
  });

  it('combines the reference tolerance and its two picks into a relative uncertainty', () => {
    const cal = twoPointScale(
      { a: pt(0, 0), b: pt(1000, 0), lengthMm: 100, toleranceMm: 0.1 },
      { pickErrorPx: 2 },
    );
    // [computed] √((0.1/100)² + (√2·2/1000)²) = √(1e-6 + 8e-6) = 0.003
    expect(cal.relativeUncertainty).toBeCloseTo(0.003, 12);
  });

  it.each<[string, () => unknown, CalibrationErrorCode]>([
    [
      'a zero known length',
      () => twoPointScale({ a: pt(0, 0), b: pt(10, 0), lengthMm: 0 }),
      'zero-length',
    ],
    [
      'a negative known length',
      () => twoPointScale({ a: pt(0, 0), b: pt(10, 0), lengthMm: -5 }),
      'zero-length',
    ],
    [
      'both picks on one pixel',
      () => twoPointScale({ a: pt(4, 4), b: pt(4, 4), lengthMm: 10 }),
      'coincident-points',
    ],
    [
      'a NaN pick',
      () => twoPointScale({ a: pt(Number.NaN, 0), b: pt(4, 4), lengthMm: 10 }),
      'invalid-input',
    ],
    [
      'a negative tolerance',
      () => twoPointScale({ a: pt(0, 0), b: pt(4, 4), lengthMm: 10, toleranceMm: -1 }),
      'invalid-input',
    ],
    [
      'a negative pick error',
      () => twoPointScale({ a: pt(0, 0), b: pt(4, 4), lengthMm: 10 }, { pickErrorPx: -1 }),
      'invalid-input',
    ],
  ])('refuses %s with a CalibrationError', (_what, fn, code) => {
    expect(codeOf(fn)).toBe(code);
  });
});

describe('perAxisScale', () => {
  it('gives sx and sy from an axis-aligned horizontal and vertical reference', () => {
    const cal = perAxisScale({
      horizontal: { a: pt(0, 0), b: pt(1000, 0), lengthMm: 200 },
      vertical: { a: pt(0, 0), b: pt(0, 500), lengthMm: 101 },
    });
    expect(cal.sx).toBeCloseTo(0.2, 14);
    expect(cal.sy).toBeCloseTo(0.202, 14);
    const p = sheetToMm(cal, pt(100, 100));
    expect(p.x).toBeCloseTo(20, 12);
    expect(p.y).toBeCloseTo(20.2, 12);
  });

  it('recovers sx and sy exactly from references picked off the axes', () => {
    const [sx, sy] = [0.25, 0.26];
    const len = (a: SheetPoint, b: SheetPoint) => Math.hypot(sx * (b.x - a.x), sy * (b.y - a.y));
    const h = { a: pt(100, 200), b: pt(900, 230) };
    const v = { a: pt(50, 100), b: pt(70, 700) };
    const cal = perAxisScale({
      horizontal: { ...h, lengthMm: len(h.a, h.b) },
      vertical: { ...v, lengthMm: len(v.a, v.b) },
    });
    expect(cal.sx).toBeCloseTo(sx, 12);
    expect(cal.sy).toBeCloseTo(sy, 12);
  });

  it('refuses two references that run the same way', () => {
    const fn = () =>
      perAxisScale({
        horizontal: { a: pt(0, 0), b: pt(1000, 0), lengthMm: 200 },
        vertical: { a: pt(0, 50), b: pt(500, 50), lengthMm: 100 },
      });
    expect(codeOf(fn)).toBe('degenerate-axes');
  });

  it('refuses references no positive sx, sy can fit', () => {
    const fn = () =>
      perAxisScale({
        horizontal: { a: pt(0, 0), b: pt(1000, 0), lengthMm: 100 },
        vertical: { a: pt(0, 0), b: pt(1000, 1000), lengthMm: 50 },
      });
    expect(codeOf(fn)).toBe('degenerate-axes');
  });

  it('refuses a zero-length reference', () => {
    const fn = () =>
      perAxisScale({
        horizontal: { a: pt(0, 0), b: pt(1000, 0), lengthMm: 100 },
        vertical: { a: pt(0, 0), b: pt(0, 1000), lengthMm: 0 },
      });
    expect(codeOf(fn)).toBe('zero-length');
  });
});

describe('fitHomography: published and analytic cases', () => {
  const cal = fitHomography(controls(README_ROWS));

  it('reproduces the perspective-transform README coefficients to their 10 decimals', () => {
    // The README prints 10 decimals; its inverse comes from its rounded H, so the larger
    // inverse entries (−821.81…) differ by a few 1e-9: compare relative to size.
    const near = (v: number, ref: number) => Math.abs(v - ref) < 1e-9 * (1 + Math.abs(ref));
    cal.matrix.forEach((v, i) => expect(near(v, README_COEFFS[i]!)).toBe(true));
    cal.inverse.forEach((v, i) => expect(near(v, README_COEFFS_INV[i]!)).toBe(true));
  });

  it('maps (250, 120) to the README value within 1e-5 and the exact solve within 1e-7', () => {
    const p = applyHomography(cal, pt(250, 120));
    // [published] README transform(250,120); it rounds H to 1e-10, hence 1e-5 (check-values §8.1).
    expect(Math.abs(p.x - 117.27521125839255)).toBeLessThan(1e-5);
    expect(Math.abs(p.y - 530.9202410878403)).toBeLessThan(1e-5);
    // [computed] exact solve, numpy and ml-matrix (check-values §8.1).
    expect(Math.abs(p.x - 117.27521003)).toBeLessThan(1e-7);
    expect(Math.abs(p.y - 530.92023558)).toBeLessThan(1e-7);
  });

  it('maps the plane point (130, 570) back to the README inverse within 1e-5', () => {
    const p = planeToSheet(cal, pt(130, 570));
    // [published] README transformInverse(130,570)
    expect(Math.abs(p.x - 338.99465637447327)).toBeLessThan(1e-5);
    expect(Math.abs(p.y - 278.6450957956236)).toBeLessThan(1e-5);
    // [computed] exact solve (check-values §8.1)
    expect(Math.abs(p.x - 338.99464686)).toBeLessThan(1e-7);
    expect(Math.abs(p.y - 278.64508793)).toBeLessThan(1e-7);
  });

  it('agrees with the ml-matrix 8×8 solve of the unnormalised system', () => {
    const h = oracleHomography(README_ROWS);
    cal.matrix.forEach((v, i) =>
      expect(Math.abs(v - h[i]!)).toBeLessThan(1e-9 * (1 + Math.abs(h[i]!))),
    );
  });

  it('fits four points exactly, with no residual and no redundancy', () => {
    expect(cal.rmsResidualMm).toBeLessThan(1e-9);
    expect(cal.redundancy).toBe(0);
  });

  it('maps the unit square to the trapezoid by H = [[2,1,0],[0,2,0],[0,1,1]] (check-values §8.2)', () => {
    const sq = fitHomography(
      controls([
        [0, 0, 0, 0],
        [1, 0, 2, 0],
        [1, 1, 1.5, 1],
        [0, 1, 0.5, 1],
      ]),
    );
    const exact = [2, 1, 0, 0, 2, 0, 0, 1, 1]; // [computed] check-values §8.2
    sq.matrix.forEach((v, i) => expect(Math.abs(v - exact[i]!)).toBeLessThan(1e-12));
    // [computed] check-values §8.2: the centre goes to the diagonals' crossing.
    const cases: [number, number, number, number][] = [
      [0.5, 0.5, 1, 2 / 3],
      [0.25, 0.75, 5 / 7, 6 / 7],
      [0, 0.5, 1 / 3, 2 / 3],
      [0.5, 0, 1, 0],
    ];
    for (const [x, y, u, v] of cases) {
      const p = applyHomography(sq, pt(x, y));
      expect(p.x).toBeCloseTo(u, 12);
      expect(p.y).toBeCloseTo(v, 12);
    }
  });

  it('refuses to map a point on the horizon line', () => {
    const sq = fitHomography(
      controls([
        [0, 0, 0, 0],
        [1, 0, 2, 0],
        [1, 1, 1.5, 1],
        [0, 1, 0.5, 1],
      ]),
    );
    expect(codeOf(() => applyHomography(sq, pt(3, -1)))).toBe('point-at-infinity'); // w = y + 1
  });

  it('has a local Jacobian equal to the finite difference of the mapping', () => {
    const p = pt(300, 250);
    const j = localJacobian(cal, p);
    const h = 1e-4;
    const f = (x: number, y: number) => applyHomography(cal, pt(x, y));
    const dx = [
      (f(p.x + h, p.y).x - f(p.x - h, p.y).x) / (2 * h),
      (f(p.x + h, p.y).y - f(p.x - h, p.y).y) / (2 * h),
    ];
    const dy = [
      (f(p.x, p.y + h).x - f(p.x, p.y - h).x) / (2 * h),
      (f(p.x, p.y + h).y - f(p.x, p.y - h).y) / (2 * h),
    ];
    expect(Math.abs(j[0] - dx[0]!)).toBeLessThan(1e-8);
    expect(Math.abs(j[2] - dx[1]!)).toBeLessThan(1e-8);
    expect(Math.abs(j[1] - dy[0]!)).toBeLessThan(1e-8);
    expect(Math.abs(j[3] - dy[1]!)).toBeLessThan(1e-8);
  });
});

describe('fitHomography: property and least-squares cases', () => {
  it('matches the ml-matrix oracle on random well-spread quadrilaterals', () => {
    const jitter = fc.double({ min: -150, max: 150, noNaN: true });
    fc.assert(
      fc.property(fc.array(jitter, { minLength: 16, maxLength: 16 }), (j) => {
        const base: [number, number][] = [
          [0, 0],
          [1000, 0],
          [1000, 800],
          [0, 800],
        ];
        const plane: [number, number][] = [
          [0, 0],
          [300, 0],
          [300, 200],
          [0, 200],
        ];
        const rows = base.map(([x, y], i): Row => [
          x + j[4 * i]!,
          y + j[4 * i + 1]!,
          plane[i]![0] + j[4 * i + 2]! / 10,
          plane[i]![1] + j[4 * i + 3]! / 10,
        ]);
        const cal = fitHomography(controls(rows));
        const h = oracleHomography(rows);
        for (const [x, y] of [
          [500, 400],
          [100, 700],
          [900, 50],
        ] as const) {
          const ours = applyHomography(cal, pt(x, y));
          const theirs = applyH(h, x, y);
          expect(Math.abs(ours.x - theirs[0])).toBeLessThan(1e-6);
          expect(Math.abs(ours.y - theirs[1])).toBeLessThan(1e-6);
        }
      }),
      { seed: 20240601, numRuns: 200 },
    );
  });

  // Ground truth: the README homography; 20 pixel points on a grid across its quadrilateral.
  const truth = fitHomography(controls(README_ROWS)).matrix;
  const grid: [number, number][] = [];
  for (let i = 0; i < 5; i++) for (let k = 0; k < 4; k++) grid.push([160 + 83 * i, 66 + 112 * k]);
  const exactRows = grid.map(([x, y]): Row => [x, y, ...applyH(truth, x, y)]);

  it('recovers the true mapping from more than four exact points', () => {
    const cal = fitHomography(controls(exactRows));
    cal.matrix.forEach((v, i) =>
      expect(Math.abs(v - truth[i]!)).toBeLessThan(1e-9 * (1 + Math.abs(truth[i]!))),
    );
    expect(cal.rmsResidualMm).toBeLessThan(1e-9);
    expect(cal.redundancy).toBe(2 * 20 - 8);
  });

  it('fits noisy points by least squares, as ml-matrix QR does on the same normalised system', () => {
    const noise = normals(7);
    const sigma = 0.3;
    const rows = exactRows.map(([x, y, u, v]): Row => [
      x,
      y,
      u + sigma * noise(),
      v + sigma * noise(),
    ]);
    const cal = fitHomography(controls(rows));

    // Oracle: Hartley-normalise both sides in the test, least squares by ml-matrix (QR), denormalise.
    const norm = (pts: (readonly [number, number])[]) => {
      const cx = pts.reduce((s, p) => s + p[0], 0) / pts.length;
      const cy = pts.reduce((s, p) => s + p[1], 0) / pts.length;
      const md = pts.reduce((s, p) => s + Math.hypot(p[0] - cx, p[1] - cy), 0) / pts.length;
      const k = Math.SQRT2 / md;
      return new Matrix([
        [k, 0, -k * cx],
        [0, k, -k * cy],
        [0, 0, 1],
      ]);
    };
    const ts = norm(rows.map((r) => [r[0], r[1]]));
    const td = norm(rows.map((r) => [r[2], r[3]]));
    const a: number[][] = [];
    const b: number[] = [];
    for (const [x0, y0, u0, v0] of rows) {
      const [x, y] = applyH(ts.to1DArray(), x0, y0);
      const [u, v] = applyH(td.to1DArray(), u0, v0);
      a.push([x, y, 1, 0, 0, 0, -u * x, -u * y], [0, 0, 0, x, y, 1, -v * x, -v * y]);
      b.push(u, v);
    }
    const hn = [...solve(new Matrix(a), Matrix.columnVector(b)).to1DArray(), 1];
    const hm = inverse(td)
      .mmul(new Matrix([hn.slice(0, 3), hn.slice(3, 6), hn.slice(6, 9)]))
      .mmul(ts);
    const oracle = hm.to1DArray().map((v) => v / hm.get(2, 2));
    cal.matrix.forEach((v, i) =>
      expect(Math.abs(v - oracle[i]!)).toBeLessThan(1e-8 * (1 + Math.abs(oracle[i]!))),
    );

    // A second, different estimator: the homogeneous DLT by SVD (Hartley & Zisserman Alg. 4.2).
    const a9 = a.map((r, i) => [...r.slice(0, 2), r[2]!, ...r.slice(3, 8), -b[i]!]);
    const svd = new SingularValueDecomposition(new Matrix(a9));
    const h9 = svd.rightSingularVectors.getColumn(8);
    const hs = inverse(td)
      .mmul(new Matrix([h9.slice(0, 3), h9.slice(3, 6), h9.slice(6, 9)]))
      .mmul(ts)
      .to1DArray();
    for (const [x, y] of [
      [250, 120],
      [400, 300],
      [170, 390],
    ] as const) {
      const ours = applyHomography(cal, pt(x, y));
      const [su, sv] = applyH(hs, x, y);
      expect(Math.hypot(ours.x - su, ours.y - sv)).toBeLessThan(0.02);
      const [tu, tv] = applyH(truth, x, y);
      expect(Math.hypot(ours.x - tu, ours.y - tv)).toBeLessThan(3 * sigma);
    }
    // Residual RMS near the noise: E[r²] = 2σ²(1 − 8/40) → ≈ 0.38 for σ = 0.3.
    expect(cal.rmsResidualMm).toBeGreaterThan(0.2);
    expect(cal.rmsResidualMm).toBeLessThan(0.6);
    expect(cal.residualsMm).toHaveLength(20);
  });
});

describe('fitHomography: failure paths', () => {
  it('refuses four points with three in line on the sheet, naming them', () => {
    try {
      fitHomography(
        controls([
          [0, 0, 0, 0],
          [100, 0, 10, 0],
          [200, 0, 20, 5],
          [0, 100, 0, 10],
        ]),
      );
      expect.unreachable();
    } catch (e) {
      expect(e).toBeInstanceOf(CalibrationError);
      expect((e as CalibrationError).code).toBe('degenerate-points');
      expect((e as CalibrationError).details.points).toEqual([0, 1, 2]);
    }
  });

  it('refuses four points with three in line on the plane', () => {
    const fn = () =>
      fitHomography(
        controls([
          [0, 0, 0, 0],
          [100, 0, 10, 0],
          [100, 100, 20, 0],
          [0, 100, 0, 10],
        ]),
      );
    expect(codeOf(fn)).toBe('degenerate-points');
  });

  it('refuses two picks on the same pixel', () => {
    const fn = () =>
      fitHomography(
        controls([
          [0, 0, 0, 0],
          [0, 0, 10, 0],
          [100, 100, 10, 10],
          [0, 100, 0, 10],
        ]),
      );
    expect(codeOf(fn)).toBe('degenerate-points');
  });

  it('refuses many points all on one line', () => {
    const fn = () =>
      fitHomography(controls([0, 1, 2, 3, 4, 5].map((i) => [i * 50, i * 20, i * 5, i * 2])));
    expect(codeOf(fn)).toBe('degenerate-points');
  });

  it('refuses fewer than four points', () => {
    const fn = () =>
      fitHomography(
        controls([
          [0, 0, 0, 0],
          [1, 0, 1, 0],
          [0, 1, 0, 1],
        ]),
      );
    expect(codeOf(fn)).toBe('too-few-points');
  });

  it('refuses corners matched in a crossed order', () => {
    const fn = () =>
      fitHomography(
        controls([
          [0, 0, 0, 0],
          [100, 0, 10, 0],
          [100, 100, 0, 10],
          [0, 100, 10, 10],
        ]),
      );
    expect(codeOf(fn)).toBe('folded-mapping');
  });

  it('refuses a non-finite coordinate', () => {
    const fn = () =>
      fitHomography(
        controls([
          [0, 0, 0, 0],
          [100, 0, 10, 0],
          [100, Number.NaN, 10, 10],
          [0, 100, 0, 10],
        ]),
      );
    expect(codeOf(fn)).toBe('invalid-input');
  });
});

describe('checkCalibration', () => {
  it('reports each check length’s residual and the RMS', () => {
    const cal = twoPointScale({ a: pt(0, 0), b: pt(1000, 0), lengthMm: 100 });
    const result = checkCalibration(cal, [
      { a: pt(0, 100), b: pt(500, 100), lengthMm: 50.2 },
      { a: pt(0, 0), b: pt(0, 300), lengthMm: 29.9 },
    ]);
    expect(result.checks[0]!.residualMm).toBeCloseTo(-0.2, 12);
    expect(result.checks[1]!.residualMm).toBeCloseTo(0.1, 12);
    expect(result.rmsMm).toBeCloseTo(Math.sqrt((0.04 + 0.01) / 2), 12); // [computed] 0.158114
    expect(result.maxAbsMm).toBeCloseTo(0.2, 12);
  });

  it('shows a per-axis calibration removing the error a single scale leaves', () => {
    const refs = {
      horizontal: { a: pt(0, 0), b: pt(1000, 0), lengthMm: 100 },
      vertical: { a: pt(0, 0), b: pt(0, 1000), lengthMm: 101 },
    };
    const check = [{ a: pt(0, 0), b: pt(600, 800), lengthMm: Math.hypot(60, 80.8) }];
    expect(checkCalibration(perAxisScale(refs), check).rmsMm).toBeLessThan(1e-9);
    expect(checkCalibration(twoPointScale(refs.horizontal), check).rmsMm).toBeGreaterThan(0.5);
  });

  it('refuses an empty list of checks', () => {
    const cal = twoPointScale({ a: pt(0, 0), b: pt(1000, 0), lengthMm: 100 });
    expect(codeOf(() => checkCalibration(cal, []))).toBe('invalid-input');
  });
});

describe('measureBetweenPins', () => {
  const ref = { a: pt(0, 0), b: pt(1000, 0), lengthMm: 100, toleranceMm: 0.1 };

  it('combines pick and calibration uncertainty RSS under a two-point scale', () => {
    const m = measureBetweenPins(twoPointScale(ref), pt(100, 50), pt(600, 50));
    expect(m.lengthMm).toBeCloseTo(50, 12);
    expect(m.pickMm).toBeCloseTo(2 * 0.1 * Math.SQRT2, 9); // [computed] σ·s·√2
    expect(m.calibrationMm).toBeCloseTo(50 * 0.003, 6); // [computed] L·√((0.1/100)² + (2√2/1000)²)
    expect(m.uncertaintyMm).toBeCloseTo(Math.hypot(0.2 * Math.SQRT2, 0.15), 6);
    expect(m.floorMm).toBeCloseTo(0.25, 12); // 0.5 % of 50 mm > 2 px = 0.2 mm
    expect(m.limitedByFloor).toBe(false);
  });

  it('is never better than max(0.5 % of the length, 2 px) (check-values §12.3)', () => {
    const exact = twoPointScale({ a: pt(0, 0), b: pt(1000, 0), lengthMm: 100 }, { pickErrorPx: 0 });
    const long = measureBetweenPins(exact, pt(0, 0), pt(5000, 0), { pickErrorPx: 0 });
    expect(long.uncertaintyMm).toBeCloseTo(2.5, 12); // 0.5 % of 500 mm
    expect(long.limitedByFloor).toBe(true);
    const short = measureBetweenPins(exact, pt(0, 0), pt(20, 0), { pickErrorPx: 0 });
    expect(short.uncertaintyMm).toBeCloseTo(0.2, 12); // 2 px × 0.1 mm/px
    const none = measureBetweenPins(exact, pt(0, 0), pt(20, 0), {
      pickErrorPx: 0,
      floorFraction: 0,
      floorPx: 0,
    });
    expect(none.uncertaintyMm).toBeLessThan(1e-12);
  });

  it('uses the y scale for a vertical measurement under a per-axis calibration', () => {
    const cal = perAxisScale(
      {
        horizontal: { a: pt(0, 0), b: pt(1000, 0), lengthMm: 100 },
        vertical: { a: pt(0, 0), b: pt(0, 1000), lengthMm: 102 },
      },
      { pickErrorPx: 0 },
    );
    const m = measureBetweenPins(cal, pt(300, 100), pt(300, 600));
    expect(m.lengthMm).toBeCloseTo(51, 12);
    expect(m.pickMm).toBeCloseTo(2 * 0.102 * Math.SQRT2, 9);
    expect(m.calibrationMm).toBeLessThan(1e-9);
  });

  it('propagates the pick error through the local Jacobian of a homography', () => {
    // A homography that is a pure 2× scale: the pick term must be σ·2·√2.
    const scale = fitHomography(
      controls([
        [0, 0, 0, 0],
        [100, 0, 200, 0],
        [100, 100, 200, 200],
        [0, 100, 0, 200],
      ]),
    );
    const m = measureBetweenPins(scale, pt(10, 10), pt(60, 40));
    expect(m.pickMm).toBeCloseTo(2 * 2 * Math.SQRT2, 6);

    // Under perspective, compare with the finite-difference gradient of the length itself.
    const cal = fitHomography(controls(README_ROWS));
    const [a, b] = [pt(200, 100), pt(400, 300)];
    const len = (p: SheetPoint, q: SheetPoint) => {
      const [u, v] = [applyHomography(cal, p), applyHomography(cal, q)];
      return Math.hypot(v.x - u.x, v.y - u.y);
    };
    const h = 1e-4;
    const g = [
      (len(pt(a.x + h, a.y), b) - len(pt(a.x - h, a.y), b)) / (2 * h),
      (len(pt(a.x, a.y + h), b) - len(pt(a.x, a.y - h), b)) / (2 * h),
      (len(a, pt(b.x + h, b.y)) - len(a, pt(b.x - h, b.y))) / (2 * h),
      (len(a, pt(b.x, b.y + h)) - len(a, pt(b.x, b.y - h))) / (2 * h),
    ];
    const expected = 2 * Math.hypot(...g);
    expect(Math.abs(measureBetweenPins(cal, a, b).pickMm - expected)).toBeLessThan(1e-6);
  });

  it('matches a seeded Monte Carlo of the homography’s control-point errors within 10 %', () => {
    const ctrl: ControlPoint[] = controls(README_ROWS).map((c) => ({ ...c, toleranceMm: 0.5 }));
    const cal = fitHomography(ctrl, { pickErrorPx: 2 });
    const [a, b] = [pt(200, 100), pt(450, 380)];
    const m = measureBetweenPins(cal, a, b);

    const noise = normals(11);
    const samples: number[] = [];
    for (let i = 0; i < 4000; i++) {
      const perturbed = ctrl.map((c) => ({
        px: { x: c.px.x + 2 * noise(), y: c.px.y + 2 * noise() },
        mm: { x: c.mm.x + 0.5 * noise(), y: c.mm.y + 0.5 * noise() },
      }));
      const fit = fitHomography(perturbed);
      const [u, v] = [applyHomography(fit, a), applyHomography(fit, b)];
      samples.push(Math.hypot(v.x - u.x, v.y - u.y));
    }
    const mean = samples.reduce((s, x) => s + x, 0) / samples.length;
    const sd = Math.sqrt(samples.reduce((s, x) => s + (x - mean) ** 2, 0) / (samples.length - 1));
    expect(m.calibrationMm).toBeGreaterThan(0);
    expect(Math.abs(m.calibrationMm - sd) / sd).toBeLessThan(0.1);
  });

  it('trusts residuals worse than the stated pick error', () => {
    const noise = normals(3);
    const rows: Row[] = [];
    for (let i = 0; i < 4; i++)
      for (let k = 0; k < 4; k++)
        rows.push([100 * i, 100 * k, 10 * i + 1.5 * noise(), 10 * k + 1.5 * noise()]);
    const stated = fitHomography(controls(rows), { pickErrorPx: 0.01 });
    const clean = fitHomography(controls(rows.map(([x, y]) => [x, y, x / 10, y / 10])), {
      pickErrorPx: 0.01,
    });
    const [a, b] = [pt(50, 50), pt(250, 250)];
    expect(measureBetweenPins(stated, a, b).calibrationMm).toBeGreaterThan(
      10 * measureBetweenPins(clean, a, b).calibrationMm,
    );
  });

  it('refuses two pins on the same pixel', () => {
    expect(codeOf(() => measureBetweenPins(twoPointScale(ref), pt(5, 5), pt(5, 5)))).toBe(
      'coincident-points',
    );
  });

  it('refuses a negative floor', () => {
    const fn = () =>
      measureBetweenPins(twoPointScale(ref), pt(0, 0), pt(5, 5), { floorFraction: -1 });
    expect(codeOf(fn)).toBe('invalid-input');
  });
});

describe('model scale', () => {
  it.each([
    ['1:8', 1 / 8],
    ['1/8', 1 / 8],
    ['1 : 8', 1 / 8],
    ['1:11.3', 1 / 11.3],
    ['2:1', 2],
    ['1½ in to the foot', 1.5 / 12],
    ['1 1/2" to 1 ft', 1.5 / 12],
    ['1-1/2 inch to the foot', 1.5 / 12],
    ['3/4 in = 1 ft', 0.75 / 12],
    ['3/4" scale', 0.75 / 12],
    ['¾in per foot', 0.75 / 12],
    ['7 mm to the foot', 7 / 304.8], // 1 ft = 304.8 mm exactly [computed] check-values §6
  ])('reads "%s" as the ratio %f', (text, ratio) => {
    expect(parseModelScale(text).ratio).toBeCloseTo(ratio, 12);
  });

  it('labels the ratio as builders write it', () => {
    expect(parseModelScale('1½ in to the foot').label).toBe('1:8');
    expect(parseModelScale('3/4 in = 1 ft').label).toBe('1:16');
    expect(parseModelScale('2:1').label).toBe('2:1');
  });

  it.each(['', 'eight', '1:0', '0:8', '0 in to the foot', '1:', 'inch to the foot', '1/0'])(
    'refuses "%s" with bad-scale',
    (text) => {
      expect(codeOf(() => parseModelScale(text))).toBe('bad-scale');
    },
  );

  it('brings a prototype length and its ± to the model by the ratio', () => {
    const m = prototypeToModel({ lengthMm: 800, uncertaintyMm: 8 }, parseModelScale('1:8').ratio);
    expect(m.lengthMm).toBeCloseTo(100, 12);
    expect(m.uncertaintyMm).toBeCloseTo(1, 12);
    expect(codeOf(() => prototypeToModel({ lengthMm: 1, uncertaintyMm: 0 }, 0))).toBe('bad-scale');
  });
});

describe('straightenRotation', () => {
  it('levels a line that climbs 5 px in 100 px by turning it −2.862°', () => {
    const r = straightenRotation(pt(0, 0), pt(100, 5));
    expect(r.angleDeg).toBeCloseTo((Math.atan(0.05) * 180) / Math.PI, 12); // [computed] 2.8624°
    expect(r.rotationDeg).toBeCloseTo(-2.862405, 5);
  });

  it('gives the same answer when the line is picked right to left', () => {
    const r = straightenRotation(pt(100, 5), pt(0, 0));
    expect(r.rotationDeg).toBeCloseTo(-2.862405, 5);
  });

  it('plumbs a line that should be vertical', () => {
    const r = straightenRotation(pt(0, 0), pt(3, 100), 'plumb');
    const b = rotateSheetPoint(pt(3, 100), pt(0, 0), r.rotationDeg);
    expect(Math.abs(b.x)).toBeLessThan(1e-9);
  });

  it('makes any picked line level when the sheet is turned by the answer', () => {
    const coord = fc.double({ min: -2000, max: 2000, noNaN: true });
    fc.assert(
      fc.property(coord, coord, coord, coord, (ax, ay, bx, by) => {
        fc.pre(Math.hypot(bx - ax, by - ay) > 1);
        const a = pt(ax, ay);
        const r = straightenRotation(a, pt(bx, by));
        const b = rotateSheetPoint(pt(bx, by), a, r.rotationDeg);
        expect(Math.abs(b.y - a.y)).toBeLessThan(1e-9 * Math.hypot(bx - ax, by - ay));
        expect(Math.abs(r.rotationDeg)).toBeLessThanOrEqual(90);
      }),
      { seed: 424242, numRuns: 300 },
    );
  });

  it('rotates clockwise on screen for a positive angle (y down)', () => {
    const p = rotateSheetPoint(pt(1, 0), pt(0, 0), 90);
    expect(p.x).toBeCloseTo(0, 12);
    expect(p.y).toBeCloseTo(1, 12);
  });

  it('refuses a line of two identical points', () => {
    expect(codeOf(() => straightenRotation(pt(1, 1), pt(1, 1)))).toBe('coincident-points');
  });
});

describe('sheetToMm', () => {
  it('answers through any calibration kind', () => {
    const h: HomographyCalibration = fitHomography(controls(README_ROWS));
    const p = sheetToMm(h, pt(250, 120));
    expect(Math.abs(p.x - 117.27521003)).toBeLessThan(1e-7); // [computed] check-values §8.1
  });
});
