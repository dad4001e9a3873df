/**
 * The workspace's text of a solved value. Lengths are the engine's (`shared/engine/length.ts`:
 * conversion, the one rounding rule and the marks), so a length reads the same here as on the
 * shop sheet; this file adds only what is not a length: angles in degrees and counts.
 */
import {
  fractionText,
  lengthText,
  otherUnit,
  toleranceText,
  type ModelUnit,
  type ValueResult,
} from '@shared/engine';

export type { ModelUnit };

/** A value in the model unit: a length as the engine writes it, an angle to 2 places, a count. */
export function formatIn(
  value: number,
  unit: ModelUnit,
  quantity: ValueResult['quantity'] = 'length',
): string {
  if (quantity === 'angle') return `${value.toFixed(2)}°`;
  if (quantity === 'count') return String(Math.round(value));
  return lengthText(value, unit);
}

/**
 * A length held in `unit`, written in the other unit with its mark (the model table's and the
 * detail panel's second column).
 *
 * @example otherUnitText(7.3125, 'in') // '185.738 mm'
 */
export const otherUnitText = (value: number, unit: ModelUnit): string =>
  lengthText(value, unit, otherUnit(unit));

/** The nearest 1/64 in, with "≈ " when the length is not that fraction (the engine's). */
export const fractionOf = (value: number, unit: ModelUnit): string => fractionText(value, unit);

export function formatTolerance(
  value: number | null,
  unit: ModelUnit,
  quantity: ValueResult['quantity'] = 'length',
) {
  if (value === null) return '';
  if (quantity === 'angle') return `±${value.toFixed(2)}°`;
  return toleranceText(value, unit);
}

/** "± 0.0055 wc · ± 0.0031 rss" for a derived value; its own tolerance for a given one. */
export function stackText(v: ValueResult, unit: ModelUnit): string {
  if (v.worstCase === null) return '';
  if (v.kind !== 'derived') return formatTolerance(v.worstCase, unit, v.quantity);
  return `${formatTolerance(v.worstCase, unit, v.quantity)} worst case · ${formatTolerance(v.rss, unit, v.quantity)} RSS`;
}
