import { describe, expect, it } from 'vitest';
import {
  ThreadError,
  clearanceFor,
  percentThreadFor,
  tapDrillFor,
  threadByDesignation,
  threadCatalogue,
  type ThreadErrorCode,
} from '@shared/engine/threads';

const IN = 25.4;

function codeOf(fn: () => unknown): ThreadErrorCode | undefined {
  try {
    fn();
  } catch (e) {
    if (e instanceof ThreadError) return e.code;
    throw e;
  }
  return undefined;
}

// check-values §1.2 BS 93 basic sizes, 0–10 BA: [BA, p, TPI, d, effective, minor].
// p, d, effective, minor [published] BS 93:1951 table transcription; TPI = 25.4/p [computed].
const BS93: readonly (readonly [number, number, number, number, number, number])[] = [
  [0, 1.0, 25.4, 6.0, 5.4, 4.8],
  [1, 0.9, 28.22, 5.3, 4.76, 4.22],
  [2, 0.81, 31.36, 4.7, 4.215, 3.73],
  [3, 0.73, 34.79, 4.1, 3.66, 3.22],
  [4, 0.66, 38.48, 3.6, 3.205, 2.81],
  [5, 0.59, 43.05, 3.2, 2.845, 2.49],
  [6, 0.53, 47.92, 2.8, 2.48, 2.16],
  [7, 0.48, 52.92, 2.5, 2.21, 1.92],
  [8, 0.43, 59.07, 2.2, 1.94, 1.68],
  [9, 0.39, 65.13, 1.9, 1.665, 1.43],
  [10, 0.35, 72.57, 1.7, 1.49, 1.28],
];

const sig2 = (x: number) => Number(x.toPrecision(2));

describe('BA threads (BS 93)', () => {
  it.each(BS93)(
    '%iBA: p = 0.9ⁿ and d = 6p^1.2 (2 s.f.) reproduce the BS 93 table, p %f d %f',
    (n, p, _tpi, d) => {
      // The formulas themselves, independent of the engine: [published] p = 0.9ⁿ (Wikipedia
      // "British Association screw threads"); [from memory, verified] d = 6p^1.2, check-values §1.1.
      expect(Math.abs(sig2(0.9 ** n) - p)).toBeLessThan(1e-12);
      expect(Math.abs(sig2(6 * (0.9 ** n) ** 1.2) - d)).toBeLessThan(1e-12);
      // Using the already-rounded pitch gives the same 2 s.f. diameter for 0–10 BA.
      expect(Math.abs(sig2(6 * p ** 1.2) - d)).toBeLessThan(1e-12);
      const t = threadByDesignation(`${n}BA`);
      expect(Math.abs(t.pitchMm - p)).toBeLessThan(1e-12);
      expect(Math.abs(t.majorDiameterMm - d)).toBeLessThan(1e-12);
    },
  );

  it.each(BS93)(
    '%iBA effective and minor diameters follow the BS 93 rounding of h = 0.6p to 0.005 mm',
    (n, _p, _tpi, _d, eff, minor) => {
      const t = threadByDesignation(`${n}BA`);
      expect(Math.abs(t.pitchDiameterMm - eff)).toBeLessThan(1e-9); // [published] BS 93 table
      expect(Math.abs(t.minorDiameterMm - minor)).toBeLessThan(1e-9); // [published] BS 93 table
    },
  );

  it.each(BS93)('%iBA has 47.5° flanks and TPI within ±0.05 of 25.4/p', (n, _p, tpi) => {
    const t = threadByDesignation(`${n}BA`);
    expect(t.angleDeg).toBeCloseTo(47.5, 12); // [published] britishfasteners.com/threads-ba
    expect(Math.abs((t.tpi as number) - tpi)).toBeLessThanOrEqual(0.05); // [computed] §1.2
  });

  it('holds exactly 0BA to 10BA', () => {
    expect(threadCatalogue('BA').map((t) => t.designation)).toEqual(
      Array.from({ length: 11 }, (_, n) => `${n}BA`),
    );
  });

  it('taps 2BA at ≈ 4.0 mm, 4BA at ≈ 3.0 mm and 6BA at ≈ 2.3 mm by the 75 % rule', () => {
    expect(tapDrillFor('2BA').stock.mm).toBeCloseTo(4.0, 9); // [published] ministeam.net Set A
    expect(tapDrillFor('4BA').stock.mm).toBeCloseTo(3.0, 9); // [published] britishfasteners.com
    expect(tapDrillFor('6BA').stock.mm).toBeCloseTo(2.3, 9); // [published] britishfasteners.com
  });

  // check-values §1.3: [BA, Set A/B tap mm, % thread by (d − drill)/(1.2p)].
  it.each([
    [0, 5.1, 75], // [published] ministeam.net/page30.htm
    [1, 4.5, 74], // [published] ministeam.net/page30.htm
    [2, 4.0, 72], // [published] ministeam.net/page30.htm
    [4, 3.0, 76], // [published] britishfasteners.com/threads-ba
    [5, 2.65, 78], // [published] britishfasteners.com/threads-ba
    [6, 2.3, 79], // [published] britishfasteners.com/threads-ba
    [7, 2.05, 78], // [published] britishfasteners.com/threads-ba
    [8, 1.8, 78], // [published] britishfasteners.com/threads-ba
    [9, 1.55, 75], // [published] britishfasteners.com/threads-ba
    [10, 1.4, 71], // [published] britishfasteners.com/threads-ba
  ])('%iBA: the 75 %% rule picks the published %f mm drill, cutting ≈ %i %%', (n, mm, pct) => {
    const tap = tapDrillFor(`${n}BA`);
    expect(Math.abs(tap.stock.mm - mm)).toBeLessThan(1e-9);
    expect(Math.abs(tap.stock.percentThread - pct)).toBeLessThanOrEqual(0.5 + 1e-9);
    expect(Math.abs((tap.published?.mm as number) - mm)).toBeLessThan(1e-9);
    expect(tap.rule).toContain('1.2·p');
  });

  it('3BA: the 75 % rule picks 3.4 mm; the published chart drill is IBLS #29, cutting ≈ 74 %', () => {
    // The 3.4 mm chart drill once held was [from memory]; check-values §1.3 Set C [published]
    // IBLS wiki "Threads": 3BA tap #29 (3.454 mm), 74 % by (d − drill)/(1.2p).
    const tap = tapDrillFor('3BA');
    expect(Math.abs(tap.stock.mm - 3.4)).toBeLessThan(1e-9); // [computed] 4.1 − 0.75·0.876 = 3.443
    expect(tap.published?.label).toBe('#29');
    expect(Math.abs((tap.published?.percentThread as number) - 74)).toBeLessThanOrEqual(0.5);
  });

  it('gives 2BA a 4.9 mm and 0BA a 6.2 mm free clearance', () => {
    expect(clearanceFor('2BA').free.mm).toBeCloseTo(4.9, 9); // [published] ministeam.net
    expect(clearanceFor('0BA').free.mm).toBeCloseTo(6.2, 9); // [published] ministeam.net
  });

  // IBLS number-drill clearances, check-values §1.3 Set C [published] ibls.org "Threads".
  it.each([
    [0, 'C'],
    [2, '#12'],
    [3, '#19'],
    [4, '#27'],
    [5, '#30'],
    [6, '#34'],
    [7, '#38'],
    [8, '#43'],
    [9, '#47'],
    [10, '#50'],
  ])('%iBA close clearance is the IBLS %s', (n, drill) => {
    expect(clearanceFor(`${n}BA`).close.label).toBe(drill);
  });

  it('keeps every BA clearance above the major diameter and close no larger than free', () => {
    for (const t of threadCatalogue('BA')) {
      const c = clearanceFor(t);
      expect(c.close.mm).toBeGreaterThan(t.majorDiameterMm);
      expect(c.close.mm).toBeLessThanOrEqual(c.free.mm + 1e-9);
    }
  });
});

// check-values §2.2: [size, P, D1, d2, ISO 2306 tap drill, ISO 273 close, free].
// P [published] Wikipedia ISO 261/262 table; D1, d2 [computed]; tap drill [published]
// utilitiesbunker.com; clearance [published] utilitiesbunker.com "Close H11 / Free H12".
const ISO_COARSE: readonly (readonly [string, number, number, number, number, number, number])[] = [
  ['M1.6', 0.35, 1.221, 1.373, 1.25, 1.8, 2],
  ['M2', 0.4, 1.567, 1.74, 1.6, 2.2, 2.4],
  ['M2.5', 0.45, 2.013, 2.208, 2.05, 2.7, 2.9],
  ['M3', 0.5, 2.459, 2.675, 2.5, 3.2, 3.4],
  ['M3.5', 0.6, 2.85, 3.11, 2.9, 3.7, 3.9],
  ['M4', 0.7, 3.242, 3.545, 3.3, 4.3, 4.5],
  ['M5', 0.8, 4.134, 4.48, 4.2, 5.3, 5.5],
  ['M6', 1.0, 4.917, 5.35, 5.0, 6.4, 6.6],
  ['M8', 1.25, 6.647, 7.188, 6.8, 8.4, 9],
  ['M10', 1.5, 8.376, 9.026, 8.5, 10.5, 11],
  ['M12', 1.75, 10.106, 10.863, 10.2, 13, 13.5],
  ['M14', 2.0, 11.835, 12.701, 12.0, 15, 15.5],
  ['M16', 2.0, 13.835, 14.701, 14.0, 17, 17.5],
  ['M20', 2.5, 17.294, 18.376, 17.5, 21, 22],
  ['M24', 3.0, 20.752, 22.051, 21.0, 25, 26],
];

describe('ISO metric coarse threads', () => {
  it.each(ISO_COARSE)(
    '%s has pitch %f and basic D1 %f, d2 %f (ISO 261/262, ISO 68-1)',
    (size, p, d1, d2) => {
      const t = threadByDesignation(size);
      expect(t.series).toBe('ISO metric coarse');
      expect(Math.abs(t.pitchMm - p)).toBeLessThan(1e-12); // [published] Wikipedia ISO 261
      expect(Math.abs(t.minorDiameterMm - d1)).toBeLessThanOrEqual(0.0006); // [computed] §2.2
      expect(Math.abs(t.pitchDiameterMm - d2)).toBeLessThanOrEqual(0.0006); // [computed] §2.2
      expect(t.angleDeg).toBeCloseTo(60, 12);
    },
  );

  it('knows the second-choice coarse sizes', () => {
    // [published] check-values §2.2: M1.8×0.35, M2.2×0.45, M4.5×0.75, M7×1, M18×2.5, M22×2.5.
    for (const [size, p] of [
      ['M1.8', 0.35],
      ['M2.2', 0.45],
      ['M4.5', 0.75],
      ['M7', 1],
      ['M18', 2.5],
      ['M22', 2.5],
    ] as const) {
      const t = threadByDesignation(size);
      expect(t.pitchMm).toBeCloseTo(p, 12);
      expect(t.choice).toBe('2nd');
    }
    expect(threadByDesignation('M3.5').choice).toBe('2nd'); // [published] §2.2
    expect(threadByDesignation('M3').choice).toBe('1st'); // [published] §2.2
  });

  it.each([
    ['M3', 2.5], // [published] check-values §2.2 / §11
    ['M4', 3.3], // [published] check-values §2.2 / §11
    ['M5', 4.2], // [published] check-values §2.2 / §11
    ['M6', 5.0], // [published] check-values §2.2 / §11
    ['M8', 6.8], // [published] check-values §2.2 / §11 (ISO 2306 table; D − P would be 6.75)
    ['M10', 8.5], // [published] check-values §2.2 / §11
  ])('the 75 %% rule taps %s with the published %f mm drill', (size, mm) => {
    const tap = tapDrillFor(size);
    expect(Math.abs(tap.stock.mm - mm)).toBeLessThan(1e-9);
    expect(tap.stock.set).toBe('metric');
  });

  it.each(ISO_COARSE)('%s reports the published ISO 2306 tap drill', (size, ...rest) => {
    expect(Math.abs((tapDrillFor(size).published?.mm as number) - rest[3])).toBeLessThan(1e-9);
  });

  it('states its rule for M8 and M12, where D − P and the ISO 2306 table part (§2.2 nuance)', () => {
    // Rule: drill = D − 1.299038·P·(% / 100), the "0.6495·P = 100 %" convention, then the
    // nearest stock drill. At 75 %: M8 → 6.782 → 6.8 mm (the table's drill); M12 → 10.295 →
    // 10.3 mm, where the ISO 2306 table gives 10.2 mm (79 %) — returned as `published`.
    const m8 = tapDrillFor('M8');
    expect(m8.theoreticalMm).toBeCloseTo(8 - 1.299038 * 1.25 * 0.75, 9); // [computed]
    expect(m8.stock.mm).toBeCloseTo(6.8, 9);
    const m12 = tapDrillFor('M12');
    expect(m12.theoreticalMm).toBeCloseTo(10.2946, 3); // [computed]
    expect(m12.stock.mm).toBeCloseTo(10.3, 9);
    expect(m12.published?.mm).toBeCloseTo(10.2, 9); // [published] utilitiesbunker.com, ISO 2306
    expect(m12.published?.percentThread).toBeCloseTo(79.2, 1); // [computed]
    expect(m12.rule).toContain('1.299038');
  });

  it('counts D − P as 77 % thread for every size (check-values §2.1)', () => {
    for (const t of threadCatalogue('ISO metric coarse')) {
      // [computed] check-values §2.1: "D − P gives 77 % thread for every size".
      expect(percentThreadFor(t, t.majorDiameterMm - t.pitchMm)).toBeCloseTo(76.98, 2);
    }
  });

  it.each(ISO_COARSE)('%s clears with ISO 273 fine %f… close and medium free', (size, ...rest) => {
    const c = clearanceFor(size);
    expect(Math.abs(c.close.mm - rest[4])).toBeLessThan(1e-9); // [published] utilitiesbunker.com
    expect(Math.abs(c.free.mm - rest[5])).toBeLessThan(1e-9); // [published] utilitiesbunker.com
  });
});

describe('ISO metric fine threads', () => {
  it.each([
    ['M3x0.35', 3, 0.35, 2.65],
    ['M4 x 0.5', 4, 0.5, 3.5],
    ['M5×0.5', 5, 0.5, 4.5],
    ['M6x0.75', 6, 0.75, 5.3],
    ['M8x1', 8, 1, 7.0],
    ['M10x1.25', 10, 1.25, 8.8],
    ['M10x1', 10, 1, 9.0],
    ['M12x1.5', 12, 1.5, 10.5],
    ['M12 x 1.25', 12, 1.25, 10.8],
  ])('%s is a fine thread, D %f P %f, tapped %f mm at 75 %%', (text, d, p, drill) => {
    // Fine pitches [from memory] ISO 261; drills are what the stated rule gives [computed].
    const t = threadByDesignation(text);
    expect(t.series).toBe('ISO metric fine');
    expect(t.majorDiameterMm).toBeCloseTo(d, 12);
    expect(t.pitchMm).toBeCloseTo(p, 12);
    expect(t.minorDiameterMm).toBeCloseTo(d - 1.082532 * p, 9); // [published] ISO 68-1, §2.1
    expect(tapDrillFor(t).stock.mm).toBeCloseTo(drill, 9);
  });

  it('treats an explicit coarse pitch as the coarse thread', () => {
    expect(threadByDesignation('M5x0.8').designation).toBe('M5');
    expect(threadByDesignation('m5').designation).toBe('M5');
  });

  it('clears a fine thread like the coarse one of the same diameter', () => {
    expect(clearanceFor('M10x1').free.mm).toBeCloseTo(11, 9); // [published] ISO 273 medium, §2.2
  });
});

// check-values §3 [published]: [size, major in, UNC TPI, UNC drill, UNC %, UNF TPI, UNF drill, UNF %].
// TPI: sequoia-brass-copper.com / boltport.com; drills: MH 31st ed. Table 4 (fractional sizes)
// and docslib.org/doc/4942776 (numbered); % thread [computed] by MH's formula.
const UNIFIED: readonly (readonly [
  string,
  number,
  number,
  string,
  number,
  number,
  string,
  number,
])[] = [
  ['#2', 0.086, 56, '#50', 69, 64, '#50', 79],
  ['#3', 0.099, 48, '#47', 76, 56, '#45', 73],
  ['#4', 0.112, 40, '#43', 71, 48, '#42', 68],
  ['#5', 0.125, 40, '#38', 72, 44, '#37', 71],
  ['#6', 0.138, 32, '#36', 78, 40, '#33', 77],
  ['#8', 0.164, 32, '#29', 69, 36, '#29', 78],
  ['#10', 0.19, 24, '#25', 75, 32, '#21', 76],
  ['#12', 0.216, 24, '#16', 72, 28, '#14', 73],
  ['1/4', 0.25, 20, '#7', 75, 28, '#3', 80],
  ['5/16', 0.3125, 18, 'F', 77, 24, 'I', 75],
  ['3/8', 0.375, 16, '5/16"', 77, 24, 'Q', 79],
  ['7/16', 0.4375, 14, 'U', 75, 20, '25/64"', 72],
  ['1/2', 0.5, 13, '27/64"', 78, 20, '29/64"', 72],
];

describe('Unified threads (ASME B1.1)', () => {
  it('gives numbered sizes the major diameter 0.060 + 0.013·N in', () => {
    // [published] IBLS wiki quoting Coventry (1954), check-values §3.
    for (const [size, , unc] of UNIFIED.filter((row) => row[0].startsWith('#'))) {
      const n = Number(size.slice(1));
      const t = threadByDesignation(`${size}-${unc}`);
      expect(t.majorDiameterMm / IN).toBeCloseTo(0.06 + 0.013 * n, 12);
    }
  });

  it.each(UNIFIED)(
    '%s: major %f in, UNC %i TPI tapped %s, UNF %i TPI tapped %s (75 %% thread)',
    (size, major, unc, uncDrill, uncPct, unf, unfDrill, unfPct) => {
      for (const [tpi, series, drill, pct] of [
        [unc, 'UNC', uncDrill, uncPct],
        [unf, 'UNF', unfDrill, unfPct],
      ] as const) {
        const t = threadByDesignation(`${size}-${tpi} ${series}`);
        expect(t.majorDiameterMm / IN).toBeCloseTo(major, 12); // [published] check-values §3
        expect(t.tpi).toBe(tpi); // TPI is an integer count [published] check-values §3
        expect(t.series).toBe(series);
        const tap = tapDrillFor(t);
        expect(tap.stock.label).toBe(drill); // [published] MH Table 4 / docslib 75 % column
        expect(tap.published?.label).toBe(drill);
        expect(Math.abs(tap.stock.percentThread - pct)).toBeLessThanOrEqual(0.6); // [computed]
      }
    },
  );

  it('taps 1/4-20 with #7, 1/4-28 with #3, 10-32 with #21 and 4-40 with #43', () => {
    expect(tapDrillFor('1/4-20 UNC').stock.label).toBe('#7'); // [published] MH, check-values §11
    expect(tapDrillFor('1/4-28 UNF').stock.label).toBe('#3'); // [published] MH, check-values §11
    expect(tapDrillFor('10-32 UNF').stock.label).toBe('#21'); // [published] docslib 4942776
    expect(tapDrillFor('4-40').stock.label).toBe('#43'); // [published] docslib 4942776
    expect(tapDrillFor('1/4-20 UNC').stock.inch).toBeCloseTo(0.201, 12); // [published] §5
  });

  it('applies the MH formula %thread = (D − drill)·TPI / 0.01299', () => {
    const t = threadByDesignation('1/4-20 UNC');
    // [computed] (0.25 − 0.201)·20/0.01299 = 75.44 %.
    expect(percentThreadFor(t, 0.201 * IN)).toBeCloseTo(((0.25 - 0.201) * 20) / 0.01299, 9);
    expect(tapDrillFor(t).theoreticalMm / IN).toBeCloseTo(0.25 - (0.01299 * 75) / 20, 12);
  });

  it.each([
    ['4-40', '#41'], // [published] docslib.org/doc/4942776 "50 % thread" column
    ['5-40', '7/64"'], // [published] docslib.org/doc/4942776
    ['10-32', '#18'], // [published] docslib.org/doc/4942776
    ['1/4-20', '7/32"'], // [published] docslib.org/doc/4942776
  ])('at 50 %% thread %s takes the published %s', (text, drill) => {
    expect(tapDrillFor(text, 50).stock.label).toBe(drill);
  });

  // check-values §3 clearance table [published] docslib.org/doc/4942776 "Close fit / Free fit".
  it.each([
    ['#2-56', '#43', '#41'],
    ['#4-40', '#32', '#30'],
    ['#6-32', '#27', '#25'],
    ['#8-32', '#18', '#16'],
    ['#10-32', '#9', '#7'],
    ['#12-24', '#2', '#1'],
    ['1/4-20', 'F', 'H'],
    ['5/16-24', 'P', 'Q'],
    ['3/8-16', 'W', 'X'],
    ['7/16-14', '29/64"', '15/32"'],
    ['1/2-13', '33/64"', '17/32"'],
  ])('%s clears close with %s and free with %s', (text, close, free) => {
    const c = clearanceFor(text);
    expect(c.close.label).toBe(close);
    expect(c.free.label).toBe(free);
    expect(c.close.mm).toBeGreaterThan(c.thread.majorDiameterMm);
  });
});

describe('ME threads (Model Engineer, 55°)', () => {
  // check-values §4: [designation, minor mm [computed], 75 % drill mm [computed]].
  it.each([
    ['1/8x40 ME', 2.362, 2.565],
    ['5/32x40 ME', 3.156, 3.359],
    ['3/16x40 ME', 3.949, 4.153],
    ['7/32x40 ME', 4.743, 4.946],
    ['1/4x40 ME', 5.537, 5.74],
    ['3/8x40 ME', 8.712, 8.915],
    ['1/4x32 ME', 5.333, 5.588],
    ['9/32x32 ME', 6.127, 6.381],
    ['5/16x32 ME', 6.921, 7.175],
    ['3/8x32 ME', 8.508, 8.763],
  ])('%s has minor %f mm and a 75 %% drill of %f mm', (text, minor, drill) => {
    const t = threadByDesignation(text);
    expect(t.angleDeg).toBeCloseTo(55, 12); // [published] thread-data sheet, scribd 36661779
    expect(Math.abs(t.minorDiameterMm - minor)).toBeLessThanOrEqual(0.0006);
    expect(Math.abs(tapDrillFor(t).theoreticalMm - drill)).toBeLessThanOrEqual(0.0006);
  });

  // Published ME tap drills vary; compare within ±0.15 mm as check-values §4 recommends.
  it.each([
    ['1/8x40 ME', 2.6], // [published] ministeam.net/page30.htm
    ['5/32x40 ME', 3.3], // [published] ministeam.net/page30.htm
    ['3/16x40 ME', 4.1], // [published] ministeam.net/page30.htm
    ['7/32x40 ME', 5.0], // [published] ministeam.net/page30.htm
    ['1/4x40 ME', 5.8], // [published] ministeam.net/page30.htm
    ['9/32x32 ME', 6.35], // [published] ministeam.net/page30.htm
    ['5/16x32 ME', 7.15], // [published] ministeam.net/page30.htm
    ['3/8x32 ME', 8.75], // [published] ministeam.net/page30.htm
  ])('%s: the 75 %% stock drill is within 0.15 mm of the published %f mm', (text, mm) => {
    const tap = tapDrillFor(text);
    expect(Math.abs(tap.stock.mm - mm)).toBeLessThanOrEqual(0.15);
    expect(tap.published?.mm).toBeCloseTo(mm, 9);
    expect(tap.stock.mm).toBeGreaterThan(tap.thread.minorDiameterMm);
  });

  it.each([
    ['1/8x40 ME', 3.5], // [published] ministeam.net/page30.htm
    ['3/16x40 ME', 5.0], // [published] ministeam.net/page30.htm
    ['1/4x40 ME', 6.6], // [published] ministeam.net/page30.htm
    ['1/4x32 ME', 6.6], // [published] ministeam.net/page30.htm
    ['5/16x32 ME', 8.2], // [published] ministeam.net/page30.htm
    ['3/8x32 ME', 9.8], // [published] ministeam.net/page30.htm
  ])('%s clears free with the published %f mm', (text, mm) => {
    const c = clearanceFor(text);
    expect(c.free.mm).toBeCloseTo(mm, 9);
    expect(c.close.mm).toBeGreaterThanOrEqual(c.thread.majorDiameterMm + 0.1 - 1e-9);
    expect(c.close.mm).toBeLessThanOrEqual(c.free.mm);
  });
});

describe('threadByDesignation', () => {
  it.each([
    ['2BA', '2BA'],
    ['2 BA', '2BA'],
    ['10ba', '10BA'],
    ['M5', 'M5'],
    ['M5x0.5', 'M5x0.5'],
    ['M5 x 0.5', 'M5x0.5'],
    ['1/4-20 UNC', '1/4-20 UNC'],
    ['1/4-28 UNF', '1/4-28 UNF'],
    ['1/4-20', '1/4-20 UNC'],
    ['1/4"-20 UNC-2B', '1/4-20 UNC'],
    ['10-32 UNF', '#10-32 UNF'],
    ['#10-32', '#10-32 UNF'],
    ['No. 10-24', '#10-24 UNC'],
    ['1/4x40 ME', '1/4x40 ME'],
    ['1/4 x 40 ME', '1/4x40 ME'],
    ['3/16x40ME', '3/16x40 ME'],
    ['  5/16 x 32 me ', '5/16x32 ME'],
  ])('reads "%s" as %s', (text, designation) => {
    const t = threadByDesignation(text);
    expect(t.designation).toBe(designation);
    expect(t.source.length).toBeGreaterThan(20);
  });

  it('returns each series with its own source and angle', () => {
    expect(threadByDesignation('2BA').source).toContain('BS 93');
    expect(threadByDesignation('M5').source).toContain('ISO 261');
    expect(threadByDesignation('M5x0.5').source).toContain('ISO 261 fine');
    expect(threadByDesignation('#10-32').source).toContain('ASME B1.1');
    expect(threadByDesignation('1/4x40 ME').source).toContain('55°');
  });

  it.each<[string, ThreadErrorCode]>([
    ['', 'unrecognised-designation'],
    ['hello', 'unrecognised-designation'],
    ['M', 'unrecognised-designation'],
    ['2 B A', 'unrecognised-designation'],
    ['11BA', 'unknown-size'],
    ['M7.3', 'unknown-size'],
    ['M30', 'unknown-size'],
    ['M5x0.6', 'unknown-pitch'],
    ['1/4-24', 'unknown-pitch'],
    ['1/4-28 UNC', 'series-mismatch'],
    ['1/4-20 UNF', 'series-mismatch'],
    ['1/4-40', 'series-needed'],
    ['3/32x40 ME', 'unknown-size'],
    ['1/4x26 ME', 'unknown-pitch'],
    ['#10-32 ME', 'unknown-size'],
    ['#7-40', 'unknown-size'],
    ['5/8-11 UNC', 'unknown-size'],
  ])('refuses "%s" with %s', (text, code) => {
    expect(codeOf(() => threadByDesignation(text))).toBe(code);
  });

  it('carries the input and a readable message on the error', () => {
    try {
      threadByDesignation('M5x0.6');
      expect.unreachable();
    } catch (e) {
      expect(e).toBeInstanceOf(ThreadError);
      const err = e as ThreadError;
      expect(err.details.input).toBe('M5x0.6');
      expect(err.details.known).toEqual(['M5', 'M5x0.5']);
      expect(err.message).toContain('0.8, 0.5');
    }
  });
});

describe('tapDrillFor', () => {
  it('accepts a drill set and reports the % thread the stock drill really cuts', () => {
    const tap = tapDrillFor('1/4-20 UNC', 75, 'metric');
    expect(tap.stock.label).toBe('5.1 mm');
    expect(tap.stock.percentThread).toBeCloseTo(((6.35 - 5.1) / (1.299 * 1.27)) * 100, 9);
    expect(tap.source).toContain('nearest metric stock drill');
  });

  it('goes to a smaller drill for a deeper thread', () => {
    expect(tapDrillFor('M6', 90).theoreticalMm).toBeLessThan(tapDrillFor('M6', 60).theoreticalMm);
  });

  it.each([0, -5, 101, Number.NaN])('refuses a target of %f %% thread', (pct) => {
    expect(codeOf(() => tapDrillFor('M6', pct))).toBe('invalid-percent');
  });

  it('never undercuts the basic minor diameter at the default 75 %', () => {
    for (const t of threadCatalogue()) {
      const tap = tapDrillFor(t);
      expect(tap.stock.mm).toBeGreaterThan(t.minorDiameterMm);
      expect(tap.stock.mm).toBeLessThan(t.majorDiameterMm);
      expect(tap.stock.percentThread).toBeGreaterThan(60);
      expect(tap.stock.percentThread).toBeLessThan(90);
    }
  });
});

describe('clearanceFor', () => {
  it('answers every held thread with close ≤ free, both over the major diameter, each sourced', () => {
    for (const t of threadCatalogue()) {
      const c = clearanceFor(t);
      expect(c.close.mm).toBeGreaterThan(t.majorDiameterMm);
      expect(c.close.mm).toBeLessThanOrEqual(c.free.mm + 1e-9);
      expect(c.close.source.length).toBeGreaterThan(10);
      expect(c.free.source.length).toBeGreaterThan(10);
    }
  });

  it('takes a designation string as well as a thread', () => {
    expect(clearanceFor('M6').free.mm).toBeCloseTo(6.6, 9); // [published] ISO 273 medium, §2.2
    expect(clearanceFor(threadByDesignation('M6')).close.mm).toBeCloseTo(6.4, 9); // [published]
  });
});
