import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import {
  convertLength,
  formatFraction,
  formatLength,
  nearestFraction,
} from '@shared/engine/length';
import {
  QuantityError,
  parseMixedNumber,
  parseQuantity,
  quantityIn,
  suggestNominal,
} from '@shared/engine/quantity';

function errorAt(text: string): number | undefined {
  try {
    parseQuantity(text);
  } catch (e) {
    if (e instanceof QuantityError) return e.at;
    throw e;
  }
  return undefined;
}

describe('parseQuantity', () => {
  it('reads 1 in as 25.4 mm exactly', () => {
    // 1 in = 25.4 mm exactly: International Yard and Pound Agreement (1959); NIST SP 811 App. B.8.
    expect(parseQuantity('1 in').value).toBe(25.4);
    expect(parseQuantity('1"').value).toBe(25.4);
  });

  it('converts 0.015 in to 0.381 mm and 1/8 in to 3.175 mm, correctly rounded', () => {
    // 0.015 in = 0.381 mm and 1/8 in = 3.175 mm exactly (25.4 mm/in, NIST SP 811).
    // Exact rational conversion gives the nearest double, unlike 0.015 * 25.4 (0.38099999999999995).
    expect(parseQuantity('0.015 in').value).toBe(0.381);
    expect(parseQuantity('1/8"').value).toBe(3.175);
    expect(parseQuantity('15 thou').value).toBe(0.381);
    expect(parseQuantity('3/16 in').value).toBeCloseTo(4.7625, 12); // check-values §6 table
  });

  it('reads mixed numbers with a space or a hyphen, with or without the inch mark', () => {
    for (const t of ['1 3/16', '1-3/16"', '1 3/16 in', '1-3/16 inch']) {
      const q = parseQuantity(t);
      expect(q.exact.num / q.exact.den).toBeCloseTo(1.1875, 15);
      expect(q.form).toBe('mixed');
      expect(q.denominator).toBe(16);
    }
    expect(parseQuantity('1 3/16').dimension).toBe('plain');
    expect(parseQuantity('1-3/16"').dimension).toBe('length');
  });

  it('reads fractions, decimals and whole numbers and remembers how they were written', () => {
    expect(parseQuantity('3/16')).toMatchObject({
      form: 'fraction',
      decimals: 0,
      denominator: 16,
      unit: null,
    });
    expect(parseQuantity('0.750')).toMatchObject({ form: 'decimal', decimals: 3 });
    expect(parseQuantity('.75')).toMatchObject({ form: 'decimal', decimals: 2 });
    expect(parseQuantity('6')).toMatchObject({ form: 'integer', decimals: 0 });
    expect(parseQuantity('-0.5').exact).toEqual({ num: -1, den: 2, base: 'plain' });
  });

  it('reads feet and inches: 2\' 6", 2\'-6 1/2" and 2 ft 6 in', () => {
    expect(parseQuantity(`2' 6"`).exact).toEqual({ num: 30, den: 1, base: 'in' });
    expect(parseQuantity(`2'-6 1/2"`).exact).toEqual({ num: 61, den: 2, base: 'in' });
    expect(parseQuantity('2 ft 6 in').value).toBeCloseTo(762, 12); // 30 in × 25.4
    expect(parseQuantity(`2'`).value).toBeCloseTo(609.6, 12); // 1 ft = 304.8 mm exactly
  });

  it('reads millimetres, centimetres and degrees', () => {
    expect(parseQuantity('3.175 mm')).toMatchObject({
      dimension: 'length',
      unit: 'mm',
      value: 3.175,
      decimals: 3,
    });
    expect(parseQuantity('1.5 cm').value).toBe(15);
    expect(parseQuantity('30 deg')).toMatchObject({ dimension: 'angle', value: 30 });
    expect(parseQuantity('30°').value).toBe(30);
    expect(parseQuantity(`30° 15'`).value).toBeCloseTo(30.25, 12);
  });

  it('refuses unreadable text and says where', () => {
    expect(errorAt('')).toBe(0);
    expect(errorAt('abc')).toBe(0);
    expect(errorAt('1.5 furlongs')).toBe(4);
    expect(errorAt('3/0')).toBe(2);
    expect(errorAt('1 2')).toBe(2);
    expect(errorAt('1.5 mm x')).toBe(7);
  });

  it('refuses a word that names a property of every object (constructor) as an unknown unit', () => {
    expect(errorAt('0constructor')).toBe(1);
    expect(errorAt('3 CONSTRUCTOR')).toBe(2);
  });

  it('reads a decimal of more than 308 digits by its value, not as NaN', () => {
    const q = parseQuantity(`10.${'0'.repeat(320)}1`);
    expect(q.value).toBe(10);
    expect(q.decimals).toBe(321);
    expect(parseQuantity(`0.${'0'.repeat(400)}1 mm`).value).toBe(0);
  });

  it('names an emoji whole in its message, and half of one as U+FFFD (messages are stored as JSON)', () => {
    expect(() => parseQuantity('😀')).toThrow("expected a number, found '😀'");
    expect(() => parseQuantity('3 mm 😀')).toThrow("unexpected '😀'");
    expect(() => parseQuantity('\ud83d')).toThrow("expected a number, found '\ufffd'");
  });

  it('refuses a number or a denominator beyond a double, at its position', () => {
    expect(errorAt('9'.repeat(400))).toBe(0);
    expect(errorAt(`- ${'9'.repeat(400)}.5 in`)).toBe(2);
    expect(errorAt(`1/${'9'.repeat(400)}`)).toBe(2);
    expect(errorAt(`1 1/${'9'.repeat(400)}"`)).toBe(4);
    expect(errorAt(`1' ${'9'.repeat(400)}"`)).toBe(0);
  });
});

describe('conversion and formatting', () => {
  it('converts to a model unit from the exact value', () => {
    expect(quantityIn(parseQuantity('4.7625 mm'), 'in')).toBe(0.1875);
    expect(quantityIn(parseQuantity('3/16'), 'in')).toBe(0.1875);
    expect(quantityIn(parseQuantity('0.015 in'), 'mm')).toBe(0.381);
    expect(convertLength(1, 'in', 'mm')).toBe(25.4);
    expect(convertLength(25.4, 'mm', 'in')).toBe(1);
  });

  it('formats to the nearest 1/64, reduced', () => {
    expect(formatFraction(0.1875)).toBe('3/16');
    expect(formatFraction(1.1875)).toBe('1 3/16');
    expect(formatFraction(2)).toBe('2');
    expect(formatFraction(-0.375)).toBe('-3/8');
    expect(formatFraction(0.19)).toBe('3/16'); // nearest 1/64 is 12/64
    expect(nearestFraction(0.19).error).toBeCloseTo(-0.0025, 12);
    expect(formatFraction(0.5, 64, true)).toBe('1/2"');
  });

  it('formats decimals in either unit', () => {
    expect(formatLength(4.7625, 'mm', 'in')).toBe('0.1875 in');
    expect(formatLength(0.015, 'in', 'mm')).toBe('0.381 mm');
    expect(formatLength(-0.00001, 'in', 'in', 3)).toBe('0.000 in');
  });

  it('suggests the intended fraction behind a rounded decimal', () => {
    expect(suggestNominal(parseQuantity('0.187'))?.text).toBe('3/16');
    expect(suggestNominal(parseQuantity('0.188'))?.text).toBe('3/16');
    expect(suggestNominal(parseQuantity('0.312'))?.text).toBe('5/16');
    expect(suggestNominal(parseQuantity('4.76 mm'))?.text).toBe('3/16');
    expect(suggestNominal(parseQuantity('0.1875'))).toBeNull(); // already exact
    expect(suggestNominal(parseQuantity('0.2'))).toBeNull(); // one place is too coarse to name a fraction
    expect(suggestNominal(parseQuantity('0.4321'))).toBeNull();
  });
});

describe('round trips (property)', () => {
  it('format to a fraction then parse gives back the same 64ths exactly', () => {
    fc.assert(
      fc.property(fc.integer({ min: -64 * 100, max: 64 * 100 }), (k) => {
        const inches = k / 64;
        const q = parseQuantity(formatFraction(inches));
        expect(q.exact.num / q.exact.den).toBe(inches);
      }),
      { numRuns: 1000 },
    );
  });

  it('format to decimals then parse stays within half the last place', () => {
    fc.assert(
      fc.property(
        fc.double({ min: -5000, max: 5000, noNaN: true }),
        fc.constantFrom<'in' | 'mm'>('in', 'mm'),
        (mm, to) => {
          const text = formatLength(mm, 'mm', to, 4);
          const back = quantityIn(parseQuantity(text), 'mm');
          expect(Math.abs(back - mm)).toBeLessThanOrEqual(
            (to === 'in' ? 25.4 : 1) * 0.00005 + 1e-9,
          );
        },
      ),
      { numRuns: 1000 },
    );
  });

  it('never crashes on random text: it parses or throws QuantityError', () => {
    fc.assert(
      fc.property(fc.string({ maxLength: 20 }), (t) => {
        try {
          const q = parseQuantity(t);
          expect(Number.isFinite(q.value)).toBe(true);
        } catch (e) {
          expect(e).toBeInstanceOf(QuantityError);
        }
      }),
      { numRuns: 2000 },
    );
  });
});

describe('parseMixedNumber', () => {
  it('reads the whole, decimal, fraction and mixed numbers a model scale is written with', () => {
    // Values by hand: 1 1/2 = 3/2, 3/4 = 0.75, 1/3 as the double nearest it.
    for (const t of ['1½', '1 ½', '1 1/2', '1-1/2', '1 - 1/2', '1.5']) {
      expect(parseMixedNumber(t)).toBe(1.5);
    }
    expect(parseMixedNumber('½')).toBe(0.5);
    expect(parseMixedNumber('3/4')).toBe(0.75);
    expect(parseMixedNumber('⅓')).toBe(1 / 3);
    expect(parseMixedNumber('11.3')).toBe(11.3);
  });

  it('answers undefined for a unit, a sign, a zero denominator or other text', () => {
    for (const t of ['1/2 in', '-1', '3/0', '', 'one', '1 1/2 1']) {
      expect(parseMixedNumber(t)).toBeUndefined();
    }
  });
});
