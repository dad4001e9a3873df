import { describe, expect, it } from 'vitest';
import {
  HSS_SURFACE_SPEEDS,
  ShopMathError,
  boltCircle,
  boltCircleChord,
  conservativeSurfaceSpeed,
  holeRow,
  materialSpeeds,
  spindleSpeedFor,
  spindleSpeedRpm,
  spindleSpeedRpmInch,
  surfaceSpeedMPerMin,
  surfaceSpeedSfm,
  type MaterialId,
} from '@shared/engine/shop-math';

function expectXY(actual: { x: number; y: number }, x: number, y: number, tol = 5e-6) {
  expect(Math.abs(actual.x - x)).toBeLessThanOrEqual(tol);
  expect(Math.abs(actual.y - y)).toBeLessThanOrEqual(tol);
}

function codeOf(fn: () => unknown): string | undefined {
  try {
    fn();
  } catch (e) {
    if (e instanceof ShopMathError) return e.code;
    throw e;
  }
  return undefined;
}

describe('boltCircle', () => {
  it('places 6 holes on PCD 100 from 0° (check-values §10)', () => {
    const holes = boltCircle({ pcd: 100, count: 6 });
    // [computed] check-values §10, to 5 decimals.
    const expected: [number, number][] = [
      [50, 0],
      [25, 43.30127],
      [-25, 43.30127],
      [-50, 0],
      [-25, -43.30127],
      [25, -43.30127],
    ];
    expect(holes).toHaveLength(6);
    holes.forEach((h, i) => expectXY(h, ...expected[i]!));
    expect(holes.map((h) => h.angleDeg)).toEqual([0, 60, 120, 180, 240, 300]);
    expect(boltCircleChord(100, 6)).toBeCloseTo(50, 9); // [computed] PCD·sin(30°)
  });

  it('places 5 holes on PCD 50 from 90° (check-values §10)', () => {
    const holes = boltCircle({ pcd: 50, count: 5, startAngleDeg: 90 });
    // [computed] check-values §10
    const expected: [number, number][] = [
      [0, 25],
      [-23.77641, 7.72542],
      [-14.69463, -20.22542],
      [14.69463, -20.22542],
      [23.77641, 7.72542],
    ];
    holes.forEach((h, i) => expectXY(h, ...expected[i]!));
    expect(boltCircleChord(50, 5)).toBeCloseTo(29.38926, 5); // [computed] check-values §10
  });

  it('places 8 holes on PCD 3.000 from 22.5° (check-values §10)', () => {
    const holes = boltCircle({ pcd: 3, count: 8, startAngleDeg: 22.5 });
    expectXY(holes[0]!, 1.38582, 0.57403); // [computed] check-values §10
    expectXY(holes[1]!, 0.57403, 1.38582); // [computed] check-values §10
    expect(boltCircleChord(3, 8)).toBeCloseTo(1.14805, 5); // [computed] check-values §10
    for (const h of holes) expect(Math.hypot(h.x, h.y)).toBeCloseTo(1.5, 12);
  });

  it('prints quarter-turn coordinates as 0.000, never −0.000', () => {
    const holes = boltCircle({ pcd: 50, count: 4, startAngleDeg: 90 });
    expect(holes.map((h) => `${h.x.toFixed(3)},${h.y.toFixed(3)}`)).toEqual([
      '0.000,25.000',
      '-25.000,0.000',
      '0.000,-25.000',
      '25.000,0.000',
    ]);
  });

  it('offsets every hole by the centre', () => {
    const holes = boltCircle({ pcd: 100, count: 6, centre: { x: 10, y: -20 } });
    expectXY(holes[1]!, 35, 23.30127);
  });

  it('spaces adjacent holes by the chord PCD·sin(180°/N)', () => {
    for (const count of [3, 5, 7, 12]) {
      const holes = boltCircle({ pcd: 80, count, startAngleDeg: 13 });
      const chord = Math.hypot(holes[1]!.x - holes[0]!.x, holes[1]!.y - holes[0]!.y);
      expect(chord).toBeCloseTo(boltCircleChord(80, count), 10);
    }
  });

  it.each<[string, () => unknown]>([
    ['zero holes', () => boltCircle({ pcd: 100, count: 0 })],
    ['a fractional count', () => boltCircle({ pcd: 100, count: 2.5 })],
    ['a zero PCD', () => boltCircle({ pcd: 0, count: 6 })],
    ['a negative PCD', () => boltCircle({ pcd: -10, count: 6 })],
    ['a NaN start angle', () => boltCircle({ pcd: 10, count: 6, startAngleDeg: Number.NaN })],
    ['a chord of one hole', () => boltCircleChord(100, 1)],
  ])('refuses %s with invalid-input', (_what, fn) => {
    expect(codeOf(fn)).toBe('invalid-input');
  });
});

describe('holeRow', () => {
  it('steps holes along +X by the pitch', () => {
    const holes = holeRow({ start: { x: 10, y: 5 }, pitch: 12.7, count: 3 });
    holes.forEach((h, i) => expectXY(h, 10 + 12.7 * i, 5, 1e-12));
  });

  it('steps holes along any direction, CCW from +X', () => {
    const up = holeRow({ start: { x: 0, y: 0 }, pitch: 10, count: 3, directionDeg: 90 });
    expect(up.map((h) => h.x.toFixed(3))).toEqual(['0.000', '0.000', '0.000']);
    expectXY(up[2]!, 0, 20, 1e-12);
    const slant = holeRow({ start: { x: 1, y: 2 }, pitch: 10, count: 2, directionDeg: 30 });
    expectXY(slant[1]!, 1 + 10 * Math.cos(Math.PI / 6), 2 + 5, 1e-12);
  });

  it('refuses a zero pitch or no holes', () => {
    expect(codeOf(() => holeRow({ start: { x: 0, y: 0 }, pitch: 0, count: 3 }))).toBe(
      'invalid-input',
    );
    expect(codeOf(() => holeRow({ start: { x: 0, y: 0 }, pitch: 5, count: 0 }))).toBe(
      'invalid-input',
    );
  });
});

describe('spindle and surface speeds (check-values §9)', () => {
  it.each([
    [30, 20, 477.5], // [computed] check-values §9
    [25, 10, 795.8], // [computed] check-values §9
  ])('Vc %i m/min on %i mm turns at %f rpm', (vc, d, rpm) => {
    expect(Math.abs(spindleSpeedRpm(vc, d) - rpm)).toBeLessThanOrEqual(0.05);
  });

  it('gives 100.14 m/min for 75 mm at 425 rpm', () => {
    // [computed] check-values §9 (a published page gives 100.07 with π = 3.14159… rounded).
    expect(Math.abs(surfaceSpeedMPerMin(75, 425) - 100.14)).toBeLessThanOrEqual(0.005);
  });

  it.each([
    [100, 1, 382.0], // [computed] check-values §9
    [90, 0.5, 687.5], // [computed] check-values §9
    [250, 0.25, 3819.7], // [computed] check-values §9
  ])('%i SFM on %f in turns at %f rpm', (sfm, d, rpm) => {
    expect(Math.abs(spindleSpeedRpmInch(sfm, d) - rpm)).toBeLessThanOrEqual(0.05);
  });

  it('agrees with the shop rule N ≈ 4·SFM/D within 5 %', () => {
    // [published] hobby-machinist.com "RPM ≈ 4·SFM/D"; exact factor 12/π ≈ 3.82.
    expect(spindleSpeedRpmInch(250, 0.25) / ((4 * 250) / 0.25)).toBeCloseTo(3 / Math.PI, 12);
  });

  it('reads 387 rpm at 1 in as ≈ 101 SFM (small-lathe manual, mild steel)', () => {
    // [published] manuals.online lathe table 387 rpm; [computed] 101 SFM, check-values §9.
    expect(Math.abs(surfaceSpeedSfm(1, 387) - 101)).toBeLessThanOrEqual(0.5);
  });

  it('is the same speed in either unit system', () => {
    const mPerMinPerSfm = 0.3048;
    expect(spindleSpeedRpm(100 * mPerMinPerSfm, 25.4)).toBeCloseTo(spindleSpeedRpmInch(100, 1), 9);
  });

  it('refuses a zero diameter or a negative speed', () => {
    expect(codeOf(() => spindleSpeedRpm(30, 0))).toBe('invalid-input');
    expect(codeOf(() => spindleSpeedRpm(-30, 10))).toBe('invalid-input');
    expect(codeOf(() => spindleSpeedRpmInch(100, Number.NaN))).toBe('invalid-input');
  });
});

describe('HSS materials table', () => {
  const ids: MaterialId[] = [
    'mild-steel',
    'free-cutting-steel',
    'cast-iron',
    'brass',
    'bronze',
    'aluminium',
    'copper',
    'stainless-steel',
    'tool-steel',
  ];

  it('holds every material the shop meets, each with a range and a source a builder can read', () => {
    expect(HSS_SURFACE_SPEEDS.map((m) => m.id).sort()).toEqual([...ids].sort());
    for (const m of HSS_SURFACE_SPEEDS) {
      expect(m.turning.min).toBeGreaterThan(0);
      // A material with one published figure (copper) is a range of one.
      expect(m.turning.max).toBeGreaterThanOrEqual(m.turning.min);
      if (m.drilling) expect(m.drilling.max).toBeGreaterThan(m.drilling.min);
      // Shown on the shop sheet: workshop practice, never a web address or a reference tag.
      expect(m.source).toMatch(/workshop practice/);
      expect(m.source).not.toMatch(/\[|check-values|\.(com|co\.uk|org)/);
    }
  });

  it.each([
    ['mild-steel', 20, 35], // [published] incoherency.co.uk/jesref/lathe-speeds.html, check-values §9
    ['tool-steel', 10, 20], // check-values §9 table (MH via protocutter.com [published])
    ['brass', 60, 105], // [published] incoherency.co.uk, check-values §9
    ['aluminium', 75, 180], // check-values §9 table ([published] incoherency, hobby-machinist)
    ['cast-iron', 15, 35], // check-values §9 table ([published] incoherency 35)
  ])('%s turns at %i–%i m/min with HSS', (id, min, max) => {
    const m = materialSpeeds(id);
    expect(m.turning.min).toBeCloseTo(min, 12);
    expect(m.turning.max).toBeCloseTo(max, 12);
  });

  it('chooses the low end as the conservative speed', () => {
    expect(conservativeSurfaceSpeed('mild-steel').vcMPerMin).toBeCloseTo(20, 12);
    expect(conservativeSurfaceSpeed('aluminium', 'drilling').vcMPerMin).toBeCloseTo(30, 12); // [published] incoherency
    expect(conservativeSurfaceSpeed('brass', 'drilling').range).toEqual(
      materialSpeeds('brass').turning,
    );
    for (const m of HSS_SURFACE_SPEEDS) {
      expect(conservativeSurfaceSpeed(m.id).vcMPerMin).toBeLessThanOrEqual(m.turning.max);
    }
  });

  it('turns 20 mm mild steel at ≈ 318 rpm from the conservative 20 m/min', () => {
    const s = spindleSpeedFor('mild-steel', 20);
    expect(s.rpm).toBeCloseTo(20000 / (Math.PI * 20), 9); // [computed] 318.31
    expect(s.source).toContain('workshop practice');
  });

  it('refuses an unknown material, listing the known ones', () => {
    try {
      materialSpeeds('unobtainium');
      expect.unreachable();
    } catch (e) {
      expect(e).toBeInstanceOf(ShopMathError);
      expect((e as ShopMathError).code).toBe('unknown-material');
      expect((e as ShopMathError).message).toContain('mild-steel');
    }
  });
});
