// Bad-input properties of the quantity parser, 10,000 cases each. fast-check draws a new seed
// every run and prints it with the shrunk counterexample on failure; pass that `seed` and `path`
// to fc.assert to replay it.
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { formatFraction, formatLength, nearestFraction } from '@shared/engine/length';
import { QuantityError, parseQuantity, quantityIn, type Quantity } from '@shared/engine/quantity';

const runs = { numRuns: 10_000 };
const HALF_PAIR = /[\ud800-\udbff](?![\udc00-\udfff])|(?<![\ud800-\udbff])[\udc00-\udfff]/;
const timeout = 120_000;

const units = ['in', 'ft', 'thou', 'mm', 'cm', 'deg'];
const forms = ['integer', 'decimal', 'fraction', 'mixed', 'feet-inches', 'deg-min-sec'];
const mmPerBase = { in: 25.4, mm: 1, deg: 1, plain: 1 } as const;

/** What every answer of parseQuantity must look like, whatever it was given. */
function expectWellFormed(q: Quantity): void {
  expect(['length', 'angle', 'plain']).toContain(q.dimension);
  if (q.unit !== null) expect(units).toContain(q.unit);
  expect(forms).toContain(q.form);
  expect(Number.isFinite(q.value)).toBe(true);
  expect(Number.isFinite(q.exact.num)).toBe(true);
  expect(Number.isFinite(q.exact.den) && q.exact.den > 0).toBe(true);
  expect(Number.isInteger(q.decimals) && q.decimals >= 0).toBe(true);
  if (q.denominator !== undefined) expect(Number.isSafeInteger(q.denominator)).toBe(true);
  // The value is the exact rational in its base, converted once (1 in = 25.4 mm, NIST SP 811).
  const fromExact = (q.exact.num / q.exact.den) * mmPerBase[q.exact.base];
  expect(Math.abs(q.value - fromExact)).toBeLessThanOrEqual(1e-12 * Math.max(1, Math.abs(q.value)));
  for (const unit of ['in', 'mm'] as const) expect(Number.isFinite(quantityIn(q, unit))).toBe(true);
}

/** Parses, or checks that the refusal is the parser's own error with a position in the text. */
function parseOrRefuse(text: string): Quantity | QuantityError {
  try {
    const q = parseQuantity(text);
    expectWellFormed(q);
    return q;
  } catch (e) {
    if (!(e instanceof QuantityError)) throw e;
    expect(Number.isInteger(e.at) && e.at >= 0 && e.at <= text.length).toBe(true);
    expect(e.message.length).toBeGreaterThan(0);
    // Messages end up in stored results (jsonb), which refuse half a surrogate pair.
    expect(e.message).not.toMatch(HALF_PAIR);
    return e;
  }
}

/** Pieces that quantities are written with, near misses and things that are not quantities. */
const piece = fc.oneof(
  { weight: 4, arbitrary: fc.integer({ min: 0, max: 99_999 }).map(String) },
  fc.constantFrom('0', '00', '.', '.5', '1.', '3/16', '1/0', '0/0', '/', '-', '+', '--', ' ', '  '),
  fc.constantFrom('"', "'", '°', '″', '′', 'in', 'inch', 'inches', 'thou', 'mil', 'mils', 'ft'),
  fc.constantFrom('feet', 'foot', 'mm', 'cm', 'deg', 'degree', 'degrees', 'IN', 'Mm', 'DEG'),
  // Words that look up something else in a plain object, and numbers JavaScript reads oddly.
  fc.constantFrom('constructor', 'CONSTRUCTOR', 'toString', 'valueOf', '__proto__', 'proto'),
  fc.constantFrom('e', 'E5', 'e-3', 'Infinity', 'NaN', '0x1F', '0b1', '1_000', '½', '٣', '１'),
  fc.constantFrom('\t', '\n', '\u00a0', '\u2009', '\u0000', '\ufeff', ',', ';', '(', ')'),
  // An emoji, and each half of one alone.
  fc.constantFrom('😀', '\ud83d', '\ude00'),
  // Long digit strings: far past what a double holds, before and after a point or a slash.
  fc.integer({ min: 300, max: 420 }).map((n) => '9'.repeat(n)),
  fc.integer({ min: 300, max: 420 }).map((n) => `0.${'0'.repeat(n)}1`),
);
const quantityish = fc.array(piece, { maxLength: 8 }).map((p) => p.join(''));

describe('parseQuantity on bad input (property, 10,000 cases each)', () => {
  it(
    'arbitrary strings: a well-formed quantity or a QuantityError with its position, nothing else',
    () => {
      fc.assert(
        fc.property(
          fc.oneof(
            fc.string({ unit: 'binary', maxLength: 40 }),
            fc.string({
              unit: fc.constantFrom(...'0123456789 ./-+"\'°inmcftdegho'),
              maxLength: 24,
            }),
          ),
          (text) => {
            parseOrRefuse(text);
          },
        ),
        runs,
      );
    },
    timeout,
  );

  it(
    'strings built from quantity pieces, near misses and oversized numbers: the same',
    () => {
      fc.assert(
        fc.property(quantityish, (text) => {
          parseOrRefuse(text);
        }),
        runs,
      );
    },
    timeout,
  );
});

describe('parseQuantity round trips (property, 10,000 cases each)', () => {
  it(
    'a fraction of an inch with a power-of-two denominator, formatted and parsed back, is exact',
    () => {
      fc.assert(
        fc.property(
          fc.integer({ min: -64 * 1000, max: 64 * 1000 }),
          fc.constantFrom(2, 4, 8, 16, 32, 64),
          fc.boolean(),
          (k, den, mark) => {
            const inches = Math.round((k * den) / 64) / den;
            const text = formatFraction(inches, den, mark);
            const q = parseQuantity(text);
            // Exact: the rational in inches equals the fraction (no tolerance; -0 reads as 0).
            expect(q.exact.num / q.exact.den + 0).toBe(inches + 0);
            expect(q.dimension).toBe(mark ? 'length' : 'plain');
          },
        ),
        runs,
      );
    },
    timeout,
  );

  it(
    'any length formatted to 0–6 decimals and parsed back is within half a unit of the last place',
    () => {
      fc.assert(
        fc.property(
          fc.double({ min: -1e5, max: 1e5, noNaN: true }),
          fc.constantFrom<'in' | 'mm'>('in', 'mm'),
          fc.integer({ min: 0, max: 6 }),
          (mm, to, decimals) => {
            const back = quantityIn(parseQuantity(formatLength(mm, 'mm', to, decimals)), 'mm');
            // Rounding to `decimals` places moves the value by at most half a unit of the last
            // place, in the written unit; plus double rounding of the two conversions.
            const halfUnitMm = 0.5 * 10 ** -decimals * (to === 'in' ? 25.4 : 1);
            expect(Math.abs(back - mm)).toBeLessThanOrEqual(
              halfUnitMm * (1 + 1e-9) + 1e-12 * Math.abs(mm),
            );
          },
        ),
        runs,
      );
    },
    timeout,
  );

  it(
    'feet and inches written as 2\' 6 3/8" read back as the exact number of inches',
    () => {
      fc.assert(
        fc.property(
          fc.integer({ min: 0, max: 500 }),
          fc.integer({ min: 0, max: 11 }),
          fc.integer({ min: 0, max: 63 }),
          fc.constantFrom(' ', '-', ' - ', ''),
          (feet, inches, sixtyFourths, joint) => {
            const frac = nearestFraction(sixtyFourths / 64).text;
            const inchPart = sixtyFourths ? (inches ? `${inches} ${frac}` : frac) : `${inches}`;
            const q = parseQuantity(`${feet}'${joint}${inchPart}"`);
            expect(q.form).toBe('feet-inches');
            expect(q.exact.base).toBe('in');
            expect(q.exact.num / q.exact.den).toBe(feet * 12 + inches + sixtyFourths / 64);
          },
        ),
        runs,
      );
    },
    timeout,
  );

  it(
    'the nearest fraction to 1/64 is never more than 1/128 in away and parses back to itself',
    () => {
      fc.assert(
        fc.property(fc.double({ min: -1e4, max: 1e4, noNaN: true }), (inches) => {
          const f = nearestFraction(inches, 64);
          expect(Math.abs(f.error)).toBeLessThanOrEqual(1 / 128 + 1e-12 * Math.abs(inches));
          const q = parseQuantity(f.text);
          expect(q.exact.num / q.exact.den + 0).toBe(f.value + 0);
        }),
        runs,
      );
    },
    timeout,
  );
});
