/**
 * Lengths: the one place that knows how many millimetres make an inch, how a length is rounded
 * for display, and how it is written (decimal in either unit, both units, a fraction of an
 * inch). Every screen, the shop sheet, its PDF and CSV call these, so one length reads the same
 * everywhere.
 *
 * - 1 in = 25.4 mm exactly (international yard and pound agreement, 1959; NIST SP 811 B.8).
 * - Shown to 4 places in inches and 3 in millimetres (0.0001 in ≈ 0.003 mm): the places a
 *   workshop reads off a micrometer or a digital readout in either unit (common practice).
 * - The one rounding rule: half away from zero on the decimal value the length stands for (its
 *   15 significant digits). A length that is exactly half way in decimal but a hair under it in
 *   binary (7.3125 in = 185.7375 mm, held as 185.73749999…) rounds as the decimal does, to
 *   185.738.
 */

/** Millimetres in one inch, exactly. */
export const MM_PER_IN = 25.4;
/** Millimetres in one foot, exactly (12 in). */
export const MM_PER_FT = 12 * MM_PER_IN;

/** The units a model, a sheet or a shop sheet is held and written in. */
export type ModelUnit = 'in' | 'mm';

/** Decimal places a length is written with, by unit. */
export const LENGTH_PLACES: Readonly<Record<ModelUnit, number>> = { in: 4, mm: 3 };

/** The other unit, for the second column of a shop sheet. */
export const otherUnit = (unit: ModelUnit): ModelUnit => (unit === 'in' ? 'mm' : 'in');

/**
 * Converts a length between units, exactly by 25.4.
 *
 * @example convertLength(1, 'in', 'mm') // 25.4
 */
export function convertLength(value: number, from: ModelUnit, to: ModelUnit): number {
  if (from === to) return value;
  return from === 'in' ? value * MM_PER_IN : value / MM_PER_IN;
}

/**
 * Rounds a value to `places` decimals by the one rule (half away from zero, binary near-misses
 * taken as the decimal they stand for); never answers −0.
 *
 * @example roundTo(185.7375, 3) // 185.738
 */
export function roundTo(value: number, places: number): number {
  if (!Number.isFinite(value)) return value;
  if (value === 0) return 0;
  // The decimal the double stands for: its 15 significant digits (every double reads back from
  // them). 185.7375 is held as 185.73749999999999…, whose 15 digits are 185.737500000000.
  const [mantissa = '0', exponent = '0'] = Math.abs(value).toExponential(14).split('e');
  const digits = mantissa.replace('.', '');
  const kept = Number(exponent) + 1 + places;
  if (kept < 0) return 0;
  if (kept >= digits.length)
    return Number(`${Math.sign(value) < 0 ? '-' : ''}${digits}e${kept - digits.length - places}`);
  // Half away from zero, decided on the decimal digits, so no product with 10^places can tip it.
  let whole = BigInt(digits.slice(0, kept) || '0');
  if (Number(digits[kept]) >= 5) whole += 1n;
  const r = Number(`${whole}e-${places}`);
  return r === 0 ? 0 : Math.sign(value) * r;
}

/**
 * Rounds up (toward +∞) to `places` decimals: a tolerance written from a measurement is never
 * better than measured. A value within 10⁻⁹ of a step stays on it (0.0050 does not become 0.0051
 * for a binary hair above).
 *
 * @example roundUpTo(0.00501, 4) // 0.0051
 */
export function roundUpTo(value: number, places: number): number {
  if (!Number.isFinite(value)) return value;
  const f = 10 ** places;
  const r = Math.ceil(value * f - 1e-9) / f;
  return r === 0 ? 0 : r;
}

/**
 * A length's number as written in its unit (4 places in inches, 3 in millimetres, or as given),
 * without the unit; never "-0.0000".
 *
 * @example lengthNumber(7.3125 * 25.4, 'mm') // '185.738'
 */
export function lengthNumber(value: number, unit: ModelUnit, places = LENGTH_PLACES[unit]): string {
  return roundTo(value, places).toFixed(places);
}

/** The unit's mark after a number: `"` for inches, ` mm` for millimetres. */
export const unitMark = (unit: ModelUnit): string => (unit === 'in' ? '"' : ' mm');

/**
 * A length held in `unit`, written in `to` (default the same) with its mark.
 *
 * @example lengthText(7.3125, 'in') // '7.3125"'
 * @example lengthText(7.3125, 'in', 'mm') // '185.738 mm'
 */
export function lengthText(value: number, unit: ModelUnit, to: ModelUnit = unit): string {
  return `${lengthNumber(convertLength(value, unit, to), to)}${unitMark(to)}`;
}

/**
 * A length held in `unit`, written in both units, its own first.
 *
 * @example bothUnits(0.75, 'in') // '0.7500" / 19.050 mm'
 */
export function bothUnits(value: number, unit: ModelUnit): string {
  return `${lengthText(value, unit)} / ${lengthText(value, unit, otherUnit(unit))}`;
}

/**
 * A length written as a decimal in `to` with the unit's name (as in an engine message).
 *
 * @example formatLength(4.7625, 'mm', 'in') // '0.1875 in'
 * @example formatLength(0.015, 'in', 'mm') // '0.381 mm'
 */
export function formatLength(
  value: number,
  from: ModelUnit,
  to: ModelUnit,
  places = LENGTH_PLACES[to],
): string {
  return `${lengthNumber(convertLength(value, from, to), to, places)} ${to}`;
}

/**
 * A tolerance: "±" and the number, in the length's own places.
 *
 * @example toleranceText(0.005, 'in') // '±0.0050'
 */
export function toleranceText(value: number, unit: ModelUnit): string {
  return `±${lengthNumber(value, unit)}`;
}

export interface NearestFraction {
  /** e.g. `1 3/16`, `-3/8`, `2` */
  text: string;
  /** The fraction's exact value in inches. */
  value: number;
  numerator: number;
  denominator: number;
  whole: number;
  /** value − input, inches. */
  error: number;
}

/**
 * The nearest fraction of an inch with a power-of-two denominator up to `maxDenominator`,
 * reduced (so 0.5 gives 1/2, not 32/64).
 *
 * @example nearestFraction(1.1875).text // '1 3/16'
 */
export function nearestFraction(inches: number, maxDenominator = 64): NearestFraction {
  const sign = inches < 0 ? -1 : 1;
  const abs = Math.abs(inches);
  let num = Math.round(abs * maxDenominator);
  let den = maxDenominator;
  while (num % 2 === 0 && den > 1) {
    num /= 2;
    den /= 2;
  }
  const whole = Math.floor(num / den);
  const rest = num - whole * den;
  const value = (sign * num) / den;
  let text: string;
  if (rest === 0) text = String(whole);
  else if (whole === 0) text = `${rest}/${den}`;
  else text = `${whole} ${rest}/${den}`;
  if (sign < 0 && num !== 0) text = `-${text}`;
  return { text, value, numerator: rest, denominator: den, whole, error: value - inches };
}

/**
 * Formats inches as the nearest fraction to 1/64 (or a coarser power of two).
 *
 * @example formatFraction(0.1875) // '3/16'
 * @example formatFraction(2.5, 64, true) // '2 1/2"'
 */
export function formatFraction(inches: number, maxDenominator = 64, withMark = false): string {
  const t = nearestFraction(inches, maxDenominator).text;
  return withMark ? `${t}"` : t;
}

/**
 * A length held in `unit` as the nearest 1/64 in, with "≈ " when it is not that fraction to
 * the places an inch is written with.
 *
 * @example fractionText(0.1875, 'in') // '3/16"'
 * @example fractionText(0.19, 'in') // '≈ 3/16"'
 */
export function fractionText(value: number, unit: ModelUnit): string {
  const inches = convertLength(value, unit, 'in');
  const near = nearestFraction(inches, 64);
  const exact = lengthNumber(near.value, 'in') === lengthNumber(inches, 'in');
  return `${exact ? '' : '≈ '}${formatFraction(inches, 64, true)}`;
}
