/**
 * The text of a feature's size: the hole, tapped hole, clearance, slot or pocket, and the drill
 * that makes it. The parts view and the shop sheet (its JSON, print view, PDF and CSV) both call
 * these, so a size reads the same on screen and in the shop. Lengths are written by `length.ts`.
 */
import type { FeatureLength, FeatureResult } from './features';
import { lengthNumber, lengthText, type ModelUnit } from './length';

/**
 * What the feature is and how big, in the model's unit (numbers without a mark; `?` for a
 * length not yet known).
 *
 * @example sizeText(tappedM4, 'mm') // 'M4 tapped'
 * @example sizeText(clearance4BA, 'in') // '4BA clearance, close'
 * @example sizeText(slot, 'in') // 'slot 0.2500 × 1.0000'
 */
export function sizeText(f: FeatureResult, units: ModelUnit): string {
  const len = (l?: FeatureLength) => (l?.value == null ? '?' : lengthNumber(l.value, units));
  switch (f.kind) {
    case 'tapped':
      return f.thread ? `${f.thread.designation} tapped` : 'tapped (no thread)';
    case 'hole':
      if (f.thread && f.clearance) return `${f.thread.designation} clearance, ${f.clearance.fit}`;
      return f.drill ? `Ø ${f.drill.label}` : 'hole';
    case 'slot':
    case 'pocket':
      return `${f.kind} ${len(f.width)} × ${len(f.length)}`;
    default:
      return 'edge';
  }
}

/**
 * A drill's diameter in millimetres to 2 places, as the drill charts list the number, letter
 * and fractional sizes.
 *
 * @example drillMmText(3.7973) // '3.80 mm'
 */
export const drillMmText = (mm: number): string => `${lengthNumber(mm, 'mm', 2)} mm`;

/**
 * The drill that makes the hole, in both units (a metric drill's label already says its size).
 *
 * @example drillText(f) // 'No. 26 · 3.73 mm · 0.1470"'
 */
export function drillText(f: FeatureResult): string {
  const d = f.drill;
  if (!d) return '';
  return d.label.endsWith('mm')
    ? `${d.label} · ${lengthText(d.inch, 'in')}`
    : `${d.label} · ${drillMmText(d.mm)} · ${lengthText(d.inch, 'in')}`;
}

/**
 * A tapped hole's drill, the % thread it cuts and the chart's drill where that differs.
 *
 * @example tapDrillText(f) // '3.3 mm · 79 % thread'
 */
export function tapDrillText(f: FeatureResult): string {
  if (!f.tap || !f.drill) return '';
  const d = f.drill;
  const pct = d.percentThread === undefined ? '' : ` · ${Math.round(d.percentThread)} % thread`;
  const chart =
    f.tap.published && f.tap.published.label !== d.label ? ` · chart ${f.tap.published.label}` : '';
  return `${d.label}${d.label.endsWith('mm') ? '' : ` (${drillMmText(d.mm)})`}${pct}${chart}`;
}

/**
 * A clearance hole's drill and fit, and the chart's size where the stock drill differs.
 *
 * @example clearanceText(f) // 'No. 25 (close)'
 */
export function clearanceText(f: FeatureResult): string {
  const c = f.clearance;
  if (!c || !f.drill) return '';
  const wanted = c.fit === 'close' ? c.close : c.free;
  const chart = wanted.label === c.stock.label ? '' : `; chart ${wanted.label}`;
  return `${f.drill.label} (${c.fit}${chart})`;
}
