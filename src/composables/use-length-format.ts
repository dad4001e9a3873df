import { formatFraction, nearestFraction, type ValueResult } from '@shared/engine';

export type ModelUnit = 'in' | 'mm';

const decimals = (unit: ModelUnit) => (unit === 'in' ? 4 : 3);

/** A length in the model unit, as the shop reads it: 4 places in inches, 3 in millimetres. */
export function formatIn(
  value: number,
  unit: ModelUnit,
  quantity: ValueResult['quantity'] = 'length',
): string {
  if (quantity === 'angle') return `${value.toFixed(2)}°`;
  if (quantity === 'count') return String(Math.round(value));
  return `${value.toFixed(decimals(unit))}${unit === 'in' ? '"' : ' mm'}`;
}

/** The same length in the other unit, and (for inches) the nearest 1/64 with its error. */
export function otherUnit(value: number, unit: ModelUnit): string {
  if (unit === 'in') return `${(value * 25.4).toFixed(3)} mm`;
  return `${(value / 25.4).toFixed(4)}"`;
}

export function fractionOf(value: number, unit: ModelUnit): string {
  const inches = unit === 'in' ? value : value / 25.4;
  const near = nearestFraction(inches, 64);
  const off = Math.abs(near.value - inches);
  return off < 5e-5
    ? `${formatFraction(inches, 64, true)}`
    : `≈ ${formatFraction(inches, 64, true)}`;
}

export function formatTolerance(
  value: number | null,
  unit: ModelUnit,
  quantity: ValueResult['quantity'] = 'length',
) {
  if (value === null) return '';
  if (quantity === 'angle') return `±${value.toFixed(2)}°`;
  return `±${value.toFixed(decimals(unit))}`;
}

/** "± 0.0055 wc · ± 0.0031 rss" for a derived value; its own tolerance for a given one. */
export function stackText(v: ValueResult, unit: ModelUnit): string {
  if (v.worstCase === null) return '';
  if (v.kind !== 'derived') return formatTolerance(v.worstCase, unit, v.quantity);
  return `${formatTolerance(v.worstCase, unit, v.quantity)} worst case · ${formatTolerance(v.rss, unit, v.quantity)} RSS`;
}
