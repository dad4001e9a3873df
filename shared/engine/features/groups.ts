/** Step 4, group stacks: what the shop machines in one set-up. */
import { sortForReadout } from './readout';
import type { FeatureResult, PartResult, SheetGroup } from './types';

/**
 * A stack once with its parts, in order of the stack's first part; other parts alone. Each
 * group's rows are every hole of its features, in readout order.
 *
 * @example groupStacks(parts, features).map((g) => g.id) // ['frames', 'buffer-beam']
 */
export function groupStacks(
  parts: readonly PartResult[],
  features: readonly FeatureResult[],
): SheetGroup[] {
  const groups: SheetGroup[] = [];
  // Each group starts with the part that opened it, so it is never empty.
  const groupOf = new Map<string, [string, ...string[]]>();
  for (const part of parts) {
    const key = part.stack ? `stack:${part.stack}` : `part:${part.id}`;
    const ids = groupOf.get(key);
    if (ids) ids.push(part.id);
    else groupOf.set(key, [part.id]);
  }
  for (const [key, ids] of groupOf) {
    const stack = key.startsWith('stack:') ? key.slice(6) : null;
    const members = features.filter((f) => ids.includes(f.part));
    groups.push({
      id: stack ?? ids[0],
      stack,
      parts: ids,
      pressure: parts.some((p) => ids.includes(p.id) && p.pressure),
      rows: sortForReadout(members.flatMap((f) => f.rows)),
      features: members.map((f) => f.id),
      pressureFeatures: members
        .filter((f) => f.warnings.some((w) => w.code === 'pressure'))
        .map((f) => f.id),
    });
  }
  return groups;
}
