// The workspace and the shop sheet write one length the same way: 10,000 generated lengths in
// both model units (half-way decimals in either unit, fractions of an inch, negatives, zero and
// any double), each written by the model table's functions and by the shop sheet's cell. Where
// the length is an exact decimal or fraction, both must also match the decimal rounding of the
// exact value (half away from zero) computed with integers. fast-check draws a new seed every
// run and prints it with the shrunk counterexample on failure; pass that `seed` and `path` to
// fc.assert to replay it.
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import {
  evaluateFeatures,
  modelSchema,
  otherUnit,
  unitMark,
  type FairsheetModelInput,
  type FeatureLength,
  type ModelUnit,
} from '@shared/engine';
import { buildShopSheet, lengthCell } from '../../../server/services/shop-sheet';
import { formatIn, formatTolerance, otherUnitText } from '@/lib/length-format';

/** A length held in a model unit; `exact` is its value as a ratio of integers, when it has one. */
interface Case {
  unit: ModelUnit;
  value: number;
  exact?: { num: bigint; den: bigint };
}

const PLACES: Record<ModelUnit, number> = { in: 4, mm: 3 };

/** num/den written to `places` decimals, half away from zero, in integers only; never "-0". */
function exactText(num: bigint, den: bigint, places: number): string {
  const neg = num < 0n !== den < 0n;
  const n = (num < 0n ? -num : num) * 10n ** BigInt(places);
  const d = den < 0n ? -den : den;
  const q = (2n * n + d) / (2n * d);
  const digits = q.toString().padStart(places + 1, '0');
  const text = `${digits.slice(0, -places)}.${digits.slice(-places)}`;
  return neg && q !== 0n ? `-${text}` : text;
}

/** The exact value in the other unit: × 254/10 to millimetres, × 10/254 to inches. */
const exactOther = (unit: ModelUnit, num: bigint, den: bigint) =>
  unit === 'in' ? { num: num * 254n, den: den * 10n } : { num: num * 10n, den: den * 254n };

const unitArb = fc.constantFrom<ModelUnit>('in', 'mm');
const ratio = (unit: ModelUnit, num: number, den: number): Case => ({
  unit,
  value: num / den,
  exact: { num: BigInt(num), den: BigInt(den) },
});

const cases: fc.Arbitrary<Case> = fc.oneof(
  // Half way at the model unit's last place: x.xxxx5 in, x.xxx5 mm, either sign.
  fc
    .tuple(unitArb, fc.integer({ min: -10_000_000, max: 10_000_000 }))
    .map(([unit, k]) => ratio(unit, 2 * k + 1, 2 * 10 ** PLACES[unit])),
  // Fractions of an inch to 1/64 (7 5/16 in = 185.7375 mm is one), in either model unit: their
  // millimetres are half way at the third place for every odd sixteenth.
  fc
    .tuple(unitArb, fc.integer({ min: -64_000, max: 64_000 }))
    .map(([unit, n]) =>
      unit === 'in'
        ? ratio('in', n, 64)
        : { unit, value: (n * 25.4) / 64, exact: { num: BigInt(n) * 254n, den: 640n } },
    ),
  // Lengths written to the model unit's places, as a drawing or a measurement gives them.
  fc
    .tuple(unitArb, fc.integer({ min: -100_000_000, max: 100_000_000 }))
    .map(([unit, k]) => ratio(unit, k, 10 ** PLACES[unit])),
  // Zero, both zeros and lengths too small to show.
  fc.tuple(unitArb, fc.constantFrom(0, -0, 1e-9, -1e-9, 4.9e-5, -4.9e-5)).map(([unit, value]) => ({
    unit,
    value,
  })),
  // Any length a solve can answer.
  fc
    .tuple(unitArb, fc.double({ min: -50_000, max: 50_000, noNaN: true }))
    .map(([unit, value]) => ({ unit, value })),
);

const at = (value: number): FeatureLength => ({
  value,
  worstCase: null,
  rss: null,
  expr: 'x',
  provenance: 'derived',
  restsOn: [],
  contributors: [],
});

describe('one length, one text: the workspace and the shop sheet', () => {
  it('write 10,000 generated lengths identically, in both units and both model units', () => {
    fc.assert(
      fc.property(cases, ({ unit, value, exact }) => {
        const other = otherUnit(unit);
        // The workspace: the model table's value and other-unit columns (and the detail panel's).
        const workspace = { own: formatIn(value, unit), other: otherUnitText(value, unit) };
        // The shop sheet: the ordinate cell of buildShopSheet, the unit in the column's head.
        const cell = lengthCell(at(value), unit);
        const shop = {
          own: `${cell.text}${unitMark(unit)}`,
          other: `${cell.otherText}${unitMark(other)}`,
        };
        expect(shop).toEqual(workspace);
        expect(formatTolerance(Math.abs(value), unit)).toBe(`±${cell.text.replace('-', '')}`);
        if (exact) {
          const o = exactOther(unit, exact.num, exact.den);
          expect(cell.text).toBe(exactText(exact.num, exact.den, PLACES[unit]));
          expect(cell.otherText).toBe(exactText(o.num, o.den, PLACES[other]));
        }
      }),
      { numRuns: 10_000 },
    );
  });

  it('writes 7 5/16 in as 185.738 mm in the model table and in the built shop sheet (issue 15)', () => {
    // [computed] 8 3/4 − 2 1/4 / 2 − 5/16 = 7 5/16 in = 185.7375 mm exactly: half way, up.
    const input: FairsheetModelInput = {
      format: 'fairsheet.model',
      version: 1,
      units: 'in',
      dimensions: [
        { name: 'frame', kind: 'stated', value: 8.75, tol: 0.005 },
        { name: 'horn', kind: 'stated', value: 2.25, tol: 0.005 },
        { name: 'edge', kind: 'stated', value: 0.3125, tol: 0.005 },
      ],
      parts: [{ id: 'plate', name: 'Plate', material: 'mild-steel' }],
      features: [
        {
          id: 'bolt',
          part: 'plate',
          kind: 'hole',
          x: 'frame - horn / 2 - edge',
          y: 0.5,
          thread: '4BA',
          clearance: 'close',
          depth: 'frame - horn / 2 - edge',
        },
      ],
    };
    const model = modelSchema.parse(input);
    const features = evaluateFeatures(model);
    const sheet = buildShopSheet({
      project: { id: 'p', name: 'Lengths', modelScale: null },
      revision: 1,
      date: '2026-01-01T00:00:00.000Z',
      derivedBy: null,
      model,
      features,
    });
    const row = sheet.groups[0]!.rows[0]!;
    const x = features.features[0]!.x.value!;
    expect(otherUnitText(x, 'in')).toBe('185.738 mm');
    expect(formatIn(x, 'in')).toBe('7.3125"');
    expect(row.x.text).toBe('7.3125');
    expect(row.x.otherText).toBe('185.738');
    expect(sheet.otherUnits).toBe('mm');
    expect(row.depth).toBe('7.3125" / 185.738 mm');
    expect(row.size).toBe('4BA clearance, close');
  });

  it('writes the same length in a millimetre model: 185.7375 mm is 185.738 mm and 7.3125"', () => {
    expect(formatIn(185.7375, 'mm')).toBe('185.738 mm');
    expect(otherUnitText(185.7375, 'mm')).toBe('7.3125"');
    const cell = lengthCell(at(185.7375), 'mm');
    expect([cell.text, cell.otherText]).toEqual(['185.738', '7.3125']);
  });
});
