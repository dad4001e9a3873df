import { describe, expect, it } from 'vitest';
import {
  impliedTolerance,
  modelSchema,
  scaledTolerance,
  toleranceDefaults,
} from '@shared/engine/model';
import { parseQuantity } from '@shared/engine/quantity';

const D = toleranceDefaults();
const implied = (
  t: string,
  unit: 'in' | 'mm' = 'in',
  quantity: 'length' | 'angle' | 'count' = 'length',
) => impliedTolerance(parseQuantity(t), quantity, unit, D);

describe('implied tolerances', () => {
  it('gives inch values the title-block tolerance of how they are written', () => {
    // Common title-block practice (no published source): fractions ±1/64; 1–4 places ±0.1/0.01/0.005/0.0005.
    expect(implied('3/16')).toBe(1 / 64);
    expect(implied('1 3/16"')).toBe(1 / 64);
    expect(implied('0.7')).toBe(0.1);
    expect(implied('0.75')).toBe(0.01);
    expect(implied('0.750')).toBe(0.005);
    expect(implied('0.7500')).toBe(0.0005);
    expect(implied('15 thou')).toBe(0.005); // thou count as three-place inches
  });

  it('converts an inch tolerance when the model is in millimetres', () => {
    expect(implied('3/16 in', 'mm')).toBeCloseTo(25.4 / 64, 12);
  });

  it('gives millimetre values the ISO 2768-m tolerance of their size range', () => {
    // ISO 2768-1 class m, from memory: ≤6 ±0.1, ≤30 ±0.2, ≤120 ±0.3, ≤400 ±0.5, ≤1000 ±0.8, ≤2000 ±1.2.
    expect(implied('5', 'mm')).toBe(0.1);
    expect(implied('25 mm', 'mm')).toBe(0.2);
    expect(implied('30.5 mm', 'mm')).toBe(0.3);
    expect(implied('250', 'mm')).toBe(0.5);
    expect(implied('1500 mm', 'mm')).toBe(1.2);
    expect(implied('25 mm', 'in')).toBeCloseTo(0.2 / 25.4, 12);
  });

  it('gives angles ±0.5° and counts no tolerance', () => {
    expect(implied('30', 'in', 'angle')).toBe(0.5);
    expect(implied('6', 'in', 'count')).toBe(0);
  });

  it('gives a scaled value 0.5 % of its length with a 0.5 mm floor', () => {
    expect(scaledTolerance(200, 'mm', D)).toBeCloseTo(1, 12);
    expect(scaledTolerance(20, 'mm', D)).toBe(0.5);
    expect(scaledTolerance(1, 'in', D)).toBeCloseTo(0.5 / 25.4, 12);
  });

  it('lets a model override its defaults', () => {
    const d = toleranceDefaults({ inchFraction: 1 / 32, angleDeg: 1 });
    expect(impliedTolerance(parseQuantity('1/2'), 'length', 'in', d)).toBe(1 / 32);
    expect(d.inchDecimal).toEqual([0.1, 0.01, 0.005, 0.0005]);
  });
});

describe('model schema v1', () => {
  const base = { format: 'fairsheet.model', version: 1, units: 'in' } as const;

  it('accepts the documented example with optional fields', () => {
    const m = modelSchema.parse({
      ...base,
      dimensions: [
        {
          name: 'overall',
          kind: 'stated',
          value: '6 1/4',
          tol: '0.005',
          label: 'Overall',
          part: 'frame',
          sheet: 's1',
          note: 'n',
        },
        { name: 'boss', kind: 'stated', value: 0.75, tolMinus: '0.002', tolPlus: '0.004' },
        { name: 'slot', kind: 'derived' },
        { name: 'tilt', kind: 'derived', quantity: 'angle', guess: '10°' },
      ],
      relations: [{ id: 'r1', expr: 'overall = boss + slot', note: 'chain' }],
    });
    expect(m.dimensions[0]!.quantity).toBe('length');
    expect(m.relations[0]!.enabled).toBe(true);
  });

  it('refuses bad names, unknown kinds, a given without value and mixed tolerance styles', () => {
    const bad = (d: unknown) => modelSchema.safeParse({ ...base, dimensions: [d] }).success;
    expect(bad({ name: 'part.sub.name', kind: 'stated', value: 1 })).toBe(false);
    expect(bad({ name: 'part.name', kind: 'stated', value: 1 })).toBe(true);
    expect(bad({ name: '1a', kind: 'stated', value: 1 })).toBe(false);
    expect(bad({ name: 'a', kind: 'guessed', value: 1 })).toBe(false);
    expect(bad({ name: 'a', kind: 'stated' })).toBe(false);
    expect(bad({ name: 'a', kind: 'stated', value: 1, tol: 1, tolPlus: 1, tolMinus: 1 })).toBe(
      false,
    );
    expect(bad({ name: 'a', kind: 'stated', value: 1, tolPlus: 1 })).toBe(false);
    expect(bad({ name: 'a', kind: 'stated', value: 1 })).toBe(true);
  });

  it('refuses another format or version', () => {
    expect(modelSchema.safeParse({ ...base, version: 2, dimensions: [] }).success).toBe(false);
    expect(modelSchema.safeParse({ ...base, format: 'other', dimensions: [] }).success).toBe(false);
  });
});
