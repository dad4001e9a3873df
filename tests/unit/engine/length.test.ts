import { describe, expect, it } from 'vitest';
import {
  bothUnits,
  convertLength,
  evaluateFeatures,
  formatLength,
  fractionText,
  lengthNumber,
  lengthText,
  MM_PER_IN,
  roundTo,
  roundUpTo,
  sizeText,
  toleranceText,
  type FairsheetModelInput,
  type FeatureResult,
} from '@shared/engine';

describe('lengths: conversion and the one rounding rule', () => {
  it('converts by 25.4 mm to the inch exactly (international inch, 1959; NIST SP 811 B.8)', () => {
    expect(MM_PER_IN).toBe(25.4);
    expect(convertLength(1, 'in', 'mm')).toBe(25.4);
    expect(convertLength(25.4, 'mm', 'in')).toBe(1);
    expect(convertLength(3, 'mm', 'mm')).toBe(3);
  });

  it('writes 7.3125 in as 185.738 mm: 185.7375 exactly, half away from zero (issue 15)', () => {
    // [computed] 7 5/16 × 25.4 = 185.7375; the double is 185.73749999…, the decimal is half way.
    expect(convertLength(7.3125, 'in', 'mm')).toBeLessThan(185.7375);
    expect(lengthText(7.3125, 'in', 'mm')).toBe('185.738 mm');
    expect(lengthText(7.3125, 'in')).toBe('7.3125"');
    expect(bothUnits(7.3125, 'in')).toBe('7.3125" / 185.738 mm');
    expect(formatLength(7.3125, 'in', 'mm')).toBe('185.738 mm');
  });

  it('rounds half away from zero on both sides and never writes −0', () => {
    expect(roundTo(0.00005, 4)).toBe(0.0001);
    expect(roundTo(-0.00005, 4)).toBe(-0.0001);
    expect(roundTo(1.0005, 3)).toBe(1.001);
    expect(roundTo(-1.0005, 3)).toBe(-1.001);
    expect(lengthNumber(-0.00001, 'in')).toBe('0.0000');
    expect(lengthNumber(-0, 'mm')).toBe('0.000');
    expect(lengthNumber(-1.5875, 'mm')).toBe('-1.588');
  });

  it('decides a half on the decimal digits, at any size: large values are not tipped by scaling', () => {
    // [computed] 99,999.49999945 to 6 places is 99,999.499999; scaled by 10⁶ with a relative
    // nudge of 10⁻¹² it would move 0.1 of its last unit and round up to 99,999.5.
    expect(roundTo(99999.49999945, 6)).toBe(99999.499999);
    expect(roundTo(12345.0000004999, 6)).toBe(12345.0);
    expect(roundTo(12345.0000005, 6)).toBe(12345.000001);
    expect(roundTo(0.0006, 3)).toBe(0.001);
    expect(roundTo(0.00004, 3)).toBe(0);
    expect(roundTo(2.675, 2)).toBe(2.68);
    expect(roundTo(123456.5, 0)).toBe(123457);
  });

  it('rounds a tolerance up, so a written tolerance is never better than measured', () => {
    expect(roundUpTo(0.00501, 4)).toBe(0.0051);
    expect(roundUpTo(0.005, 4)).toBe(0.005);
    expect(roundUpTo(0.1 + 0.2, 1)).toBe(0.3);
    expect(toleranceText(0.005, 'in')).toBe('±0.0050');
  });

  it('writes the nearest 1/64 in, marked ≈ when it is not that fraction', () => {
    expect(fractionText(0.1875, 'in')).toBe('3/16"');
    expect(fractionText(4.7625, 'mm')).toBe('3/16"');
    expect(fractionText(0.19, 'in')).toBe('≈ 3/16"');
  });
});

describe('sizeText: one text of a size for the parts view and the shop sheet', () => {
  const model = (units: 'in' | 'mm', features: FairsheetModelInput['features']) =>
    evaluateFeatures({
      format: 'fairsheet.model',
      version: 1,
      units,
      dimensions: [],
      parts: [{ id: 'plate', name: 'Plate', material: 'mild-steel', drillSet: 'metric' }],
      features,
    });
  type Feature = NonNullable<FairsheetModelInput['features']>[number];
  const one = (units: 'in' | 'mm', f: Pick<Feature, 'kind'> & Partial<Feature>): FeatureResult =>
    model(units, [{ id: 'f', part: 'plate', x: 1, y: 1, ...f }]).features[0]!;

  it('names a thread, a clearance fit and a drill as the shop sheet has always printed them', () => {
    // The shop sheet's wording (tests/api/shop-sheet.test.ts: '4BA clearance, close').
    expect(sizeText(one('in', { kind: 'hole', thread: '4BA', clearance: 'close' }), 'in')).toBe(
      '4BA clearance, close',
    );
    expect(sizeText(one('mm', { kind: 'tapped', thread: 'M4' }), 'mm')).toBe('M4 tapped');
    expect(sizeText(one('mm', { kind: 'tapped' }), 'mm')).toBe('tapped (no thread)');
    const drilled = one('mm', { kind: 'hole', drill: '6.6 mm' });
    expect(sizeText(drilled, 'mm')).toBe(`Ø ${drilled.drill!.label}`);
    expect(sizeText(one('mm', { kind: 'hole' }), 'mm')).toBe('hole');
    expect(sizeText(one('mm', { kind: 'edge' }), 'mm')).toBe('edge');
  });

  it('writes a slot and a pocket by the length rule of the model unit', () => {
    expect(sizeText(one('in', { kind: 'slot', width: 0.25, length: 7.3125 }), 'in')).toBe(
      'slot 0.2500 × 7.3125',
    );
    expect(sizeText(one('mm', { kind: 'pocket', width: 185.7375, length: 10 }), 'mm')).toBe(
      'pocket 185.738 × 10.000',
    );
  });
});
