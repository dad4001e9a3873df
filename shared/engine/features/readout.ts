/** The order a digital readout is worked in. */
import { TOLERANCES } from '../numeric';
import type { FeatureRow } from './types';

/**
 * Rows go in the order a digital readout is best worked from one direction: Y ascending, then
 * X ascending along each Y (every move in +X along a line, every new line a move in +Y), so
 * each axis is always approached the same way and backlash and table lift stay on one side.
 * Positions equal within `TOLERANCES.sameLine` of the model unit count as the same line. Unsolved positions last.
 */
export const READOUT_ORDER =
  'Rows run by Y ascending, then X ascending: approach every position from −X and −Y.';

const SAME_LINE = TOLERANCES.sameLine;

/**
 * Sorts rows into readout order (see `READOUT_ORDER`); a new array.
 *
 * @example sortForReadout(rows).map((r) => r.label) // ['A', 'B', …]
 */
export function sortForReadout<T extends Pick<FeatureRow, 'x' | 'y'>>(rows: readonly T[]): T[] {
  const key = (v: number | null) => (v === null ? Number.POSITIVE_INFINITY : v);
  return [...rows].sort((a, b) => {
    const dy = key(a.y.value) - key(b.y.value);
    if (Number.isNaN(dy) || Math.abs(dy) > SAME_LINE) return Number.isNaN(dy) ? 0 : dy;
    const dx = key(a.x.value) - key(b.x.value);
    return Number.isNaN(dx) ? 0 : dx;
  });
}
