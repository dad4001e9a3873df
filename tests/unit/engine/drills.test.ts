import { describe, expect, it } from 'vitest';
import {
  DrillError,
  FRACTIONAL_DRILLS,
  LETTER_DRILLS,
  METRIC_DRILLS,
  METRIC_TENTHS_DRILLS,
  NUMBER_DRILLS,
  drillByLabel,
  drillSet,
  nearestDrill,
  type DrillSetName,
} from '@shared/engine/drills';

const label = (l: string) => {
  const d = drillByLabel(l);
  if (!d) throw new Error(`no drill ${l}`);
  return d;
};

// check-values §5, number drills #1–#60: "No. in mm" — in [published] Wikipedia "Drill bit
// sizes" / Toolmex chart docslib.org/doc/5335266; mm [computed] × 25.4 to 3 decimals.
const NUMBER_TABLE = `
1 .2280 5.791  16 .1770 4.496  31 .1200 3.048  46 .0810 2.057
2 .2210 5.613  17 .1730 4.394  32 .1160 2.946  47 .0785 1.994
3 .2130 5.410  18 .1695 4.305  33 .1130 2.870  48 .0760 1.930
4 .2090 5.309  19 .1660 4.216  34 .1110 2.819  49 .0730 1.854
5 .2055 5.220  20 .1610 4.089  35 .1100 2.794  50 .0700 1.778
6 .2040 5.182  21 .1590 4.039  36 .1065 2.705  51 .0670 1.702
7 .2010 5.105  22 .1570 3.988  37 .1040 2.642  52 .0635 1.613
8 .1990 5.055  23 .1540 3.912  38 .1015 2.578  53 .0595 1.511
9 .1960 4.978  24 .1520 3.861  39 .0995 2.527  54 .0550 1.397
10 .1935 4.915 25 .1495 3.797  40 .0980 2.489  55 .0520 1.321
11 .1910 4.851 26 .1470 3.734  41 .0960 2.438  56 .0465 1.181
12 .1890 4.801 27 .1440 3.658  42 .0935 2.375  57 .0430 1.092
13 .1850 4.699 28 .1405 3.569  43 .0890 2.261  58 .0420 1.067
14 .1820 4.623 29 .1360 3.454  44 .0860 2.184  59 .0410 1.041
15 .1800 4.572 30 .1285 3.264  45 .0820 2.083  60 .0400 1.016`;

// check-values §5, #61–#80 in inches [published] Wikipedia "Drill bit sizes".
const NUMBER_61_80 = `61 .0390 62 .0380 63 .0370 64 .0360 65 .0350 66 .0330 67 .0320 68 .0310
69 .0292 70 .0280 71 .0260 72 .0250 73 .0240 74 .0225 75 .0210 76 .0200 77 .0180 78 .0160
79 .0145 80 .0135`;

// check-values §5, letter drills A–Z in inches [published] Wikipedia "Drill bit sizes".
const LETTER_TABLE = `A .234 B .238 C .242 D .246 E .250 F .257 G .261 H .266 I .272 J .277
K .281 L .290 M .295 N .302 O .316 P .323 Q .332 R .339 S .348 T .358 U .368 V .377 W .386
X .397 Y .404 Z .413`;

function triples(text: string): [string, number, number][] {
  const t = text.trim().split(/\s+/);
  const out: [string, number, number][] = [];
  for (let i = 0; i < t.length; i += 3) out.push([t[i]!, Number(t[i + 1]), Number(t[i + 2])]);
  return out;
}

function pairs(text: string): [string, number][] {
  const t = text.trim().split(/\s+/);
  const out: [string, number][] = [];
  for (let i = 0; i < t.length; i += 2) out.push([t[i]!, Number(t[i + 1])]);
  return out;
}

describe('number drills', () => {
  it('holds #1 to #80 and nothing else', () => {
    expect(NUMBER_DRILLS).toHaveLength(80);
    expect(new Set(NUMBER_DRILLS.map((d) => d.label)).size).toBe(80);
  });

  it.each(triples(NUMBER_TABLE))(
    '#%s is %s in and %s mm (ASME B94.11M, check-values §5)',
    (n, inch, mm) => {
      const d = label(`#${n}`);
      expect(Math.abs(d.inch - inch)).toBeLessThan(1e-9); // [published] Wikipedia "Drill bit sizes"
      expect(Math.abs(d.mm - mm)).toBeLessThanOrEqual(0.0005 + 1e-9); // [computed] × 25.4, 3 dp
      expect(d.set).toBe('number');
    },
  );

  it.each(pairs(NUMBER_61_80))('#%s is %s in (check-values §5)', (n, inch) => {
    expect(Math.abs(label(`#${n}`).inch - inch)).toBeLessThan(1e-9); // [published] Wikipedia
  });

  it('gets smaller as the number rises', () => {
    for (let n = 1; n < 80; n++) {
      expect(label(`#${n}`).mm).toBeGreaterThan(label(`#${n + 1}`).mm);
    }
  });
});

describe('letter drills', () => {
  it.each(pairs(LETTER_TABLE))('%s is %s in (check-values §5)', (l, inch) => {
    expect(Math.abs(label(l).inch - inch)).toBeLessThan(1e-9); // [published] Wikipedia
  });

  it('E is exactly 1/4 in = 6.35 mm', () => {
    expect(label('E').mm).toBeCloseTo(6.35, 12); // [computed, exact] check-values §5/§6
  });

  it('runs A–Z in increasing size, all above #1', () => {
    expect(LETTER_DRILLS.map((d) => d.label).join('')).toBe('ABCDEFGHIJKLMNOPQRSTUVWXYZ');
    for (let i = 1; i < 26; i++)
      expect(LETTER_DRILLS[i]!.mm).toBeGreaterThan(LETTER_DRILLS[i - 1]!.mm);
    expect(LETTER_DRILLS[0]!.mm).toBeGreaterThan(label('#1').mm);
  });
});

describe('fractional drills', () => {
  it('runs 1/64 to 1 in in 1/64 steps with reduced labels', () => {
    expect(FRACTIONAL_DRILLS).toHaveLength(64);
    expect(FRACTIONAL_DRILLS[0]!.label).toBe('1/64"');
    expect(FRACTIONAL_DRILLS[1]!.label).toBe('1/32"');
    expect(FRACTIONAL_DRILLS[19]!.label).toBe('5/16"');
    expect(FRACTIONAL_DRILLS[63]!.label).toBe('1"');
  });

  it.each([
    ['1/64"', 0.396875], // [computed, exact] check-values §6
    ['1/8"', 3.175], // [computed, exact] check-values §6
    ['9/64"', 3.571875], // [computed, exact] check-values §6
    ['5/16"', 7.9375], // [computed, exact] check-values §6
    ['7/16"', 11.1125], // [computed, exact] check-values §6
    ['1/2"', 12.7], // [computed, exact] check-values §6
    ['1"', 25.4], // [published] 1 in = 25.4 mm exactly, check-values §6
  ])('%s is %s mm', (l, mm) => {
    expect(label(l).mm).toBeCloseTo(mm, 12);
  });
});

describe('metric drills', () => {
  it('follow the BS 328 series: 0.05 mm to 2.95, 0.1 mm to 13.9, 0.25 mm to 25 (check-values §5)', () => {
    // [published] Wikipedia "Drill bit sizes" (BS 328); 40 + 110 + 45 sizes from 1.0 mm up.
    expect(METRIC_DRILLS).toHaveLength(195);
    for (const mm of [1, 1.25, 1.55, 2.05, 2.65, 2.95, 3, 6.8, 10.2, 13.9, 14, 14.25, 24.75, 25]) {
      expect(METRIC_DRILLS.some((d) => Math.abs(d.mm - mm) < 1e-9)).toBe(true);
    }
    for (const mm of [2.08, 3.05, 13.95, 14.1, 25.25]) {
      expect(METRIC_DRILLS.some((d) => Math.abs(d.mm - mm) < 1e-9)).toBe(false);
    }
  });

  it('labels sizes without binary noise', () => {
    expect(METRIC_DRILLS.map((d) => d.label)).toContain('2.95 mm');
    expect(METRIC_DRILLS.map((d) => d.label)).toContain('14.25 mm');
    expect(METRIC_DRILLS.every((d) => !/\d{4,} mm$/.test(d.label))).toBe(true);
  });

  it('offers the boxed 0.1 mm workshop set to 10 mm, 0.5 mm above', () => {
    expect(METRIC_TENTHS_DRILLS).toHaveLength(91 + 6);
    expect(METRIC_TENTHS_DRILLS.some((d) => Math.abs(d.mm - 2.05) < 1e-9)).toBe(false);
    expect(METRIC_TENTHS_DRILLS.at(-1)?.mm).toBeCloseTo(13, 12);
  });
});

describe('drillSet', () => {
  it.each<[DrillSetName, number]>([
    ['number', 80],
    ['letter', 26],
    ['fractional', 64],
    ['numberLetter', 106],
    ['inch', 170],
    ['all', 365],
  ])('the %s set has %i drills, smallest first', (name, count) => {
    const set = drillSet(name);
    expect(set).toHaveLength(count);
    for (let i = 1; i < set.length; i++) expect(set[i]!.mm).toBeGreaterThanOrEqual(set[i - 1]!.mm);
  });

  it('refuses an unknown set name with a DrillError', () => {
    expect(() => drillSet('imperial' as DrillSetName)).toThrow(DrillError);
  });
});

describe('nearestDrill', () => {
  it('finds #7 for a 0.2013 in (5.113 mm) hole among number and letter drills', () => {
    const d = nearestDrill(5.113, 'numberLetter');
    expect(d.label).toBe('#7');
    expect(d.inch).toBeCloseTo(0.201, 12); // [published] check-values §5
    expect(d.set).toBe('number');
  });

  it('never goes under the size in atLeast mode and never over it in atMost mode', () => {
    expect(nearestDrill(6.45, 'metric', { mode: 'atLeast' }).label).toBe('6.5 mm');
    expect(nearestDrill(6.45, 'metric', { mode: 'atMost' }).label).toBe('6.4 mm');
    expect(nearestDrill(6.42, 'metric').label).toBe('6.4 mm');
    expect(nearestDrill(6.48, 'metric').label).toBe('6.5 mm');
  });

  it('takes a drill of exactly the asked size in every mode', () => {
    for (const mode of ['nearest', 'atLeast', 'atMost'] as const) {
      expect(nearestDrill(5.1, 'metric', { mode }).label).toBe('5.1 mm');
      expect(nearestDrill(0.25 * 25.4, 'letter', { mode }).label).toBe('E');
    }
  });

  it('breaks an exact tie toward the smaller drill', () => {
    expect(nearestDrill(6.45, 'metric').label).toBe('6.4 mm');
  });

  it('searches across families in the all set', () => {
    // 1/4 in: E and 1/4" are the same size; either answers 6.35 mm.
    expect(nearestDrill(6.36, 'all').mm).toBeCloseTo(6.35, 12);
    expect(nearestDrill(4.2, 'all').label).toBe('4.2 mm');
  });

  it('answers a DrillError for a size that is not a positive length', () => {
    for (const bad of [0, -1, Number.NaN, Number.POSITIVE_INFINITY]) {
      expect(() => nearestDrill(bad, 'metric')).toThrow(DrillError);
    }
    try {
      nearestDrill(-1, 'metric');
    } catch (e) {
      expect((e as DrillError).code).toBe('invalid-size');
    }
  });

  it('answers a DrillError when no drill lies on the wanted side', () => {
    expect(() => nearestDrill(0.2, 'number', { mode: 'atMost' })).toThrow(
      expect.objectContaining({ code: 'no-drill-in-range' }),
    );
    expect(() => nearestDrill(30, 'metric', { mode: 'atLeast' })).toThrow(
      expect.objectContaining({ code: 'no-drill-in-range' }),
    );
  });
});

describe('drillByLabel', () => {
  it('reads the labels a chart or a drawing uses', () => {
    expect(drillByLabel('No. 43')?.inch).toBeCloseTo(0.089, 12); // [published] check-values §5
    expect(drillByLabel('#43')?.label).toBe('#43');
    expect(drillByLabel('f')?.label).toBe('F');
    expect(drillByLabel('5/16 in')?.mm).toBeCloseTo(7.9375, 12);
    expect(drillByLabel('10/32"')?.label).toBe('5/16"');
    expect(drillByLabel('1 in')?.mm).toBeCloseTo(25.4, 12);
    expect(drillByLabel('4.2 mm')?.mm).toBeCloseTo(4.2, 12);
  });

  it('answers undefined for a label that names no stock drill', () => {
    for (const l of ['#81', '#0', 'AA', '1/3"', '4.23 mm', 'drill']) {
      expect(drillByLabel(l)).toBeUndefined();
    }
  });
});
