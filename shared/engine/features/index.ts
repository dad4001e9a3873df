/**
 * Features of parts, evaluated for the workshop: where every hole is from its part's datum
 * (patterns expanded to one row per hole), how well each position is known, what it rests on,
 * and what makes it (tap drill, clearance drill, stock drill, spindle speed).
 *
 * Positions are not computed on the side: each feature coordinate (and each pattern's pitch
 * circle or pitch, and each expanded hole) becomes a hidden derived dimension with one relation
 * `hidden = <expression>` in a copy of the model, and the copy is solved once. So the value,
 * its worst case and RSS stack-up, its contributors and its trace come from the same engine as
 * every other derived dimension, and a position written over an undetermined value is itself
 * reported as undetermined.
 *
 * Hidden names use a prefix that no name in the model starts with (`__feat_`, lengthened with
 * `_` until it is unique), so they cannot clash with the builder's names; they never appear
 * in the answer.
 *
 * One function a step, `evaluateFeatures` running them in order:
 *
 *   expand.ts    positions → hidden dimensions and relations (patterns one pair a hole)
 *   solve.ts     one solve of the expanded model; hidden relations' errors back to their fields
 *   rows.ts      positions read back; each feature's rows, tooling (tooling.ts) and warnings
 *   groups.ts    parts grouped by stack, rows in readout order (readout.ts)
 */
import { modelSchema } from '../model';
import type { SolveOptions } from '../solve';
import { expandFeatures } from './expand';
import { groupStacks } from './groups';
import { READOUT_ORDER } from './readout';
import { LengthReader, readFeatures, readParts } from './rows';
import { solveExpansion } from './solve';
import type { FeaturesResult } from './types';

export type * from './types';
export { READOUT_ORDER, sortForReadout } from './readout';
export { expressionNames } from './expand';

/**
 * Evaluates every part and feature of a model for the shop: positions from each part's datum
 * with value, worst case and RSS; provenance and the given kinds each rests on; threads with
 * the tap drill by target % thread (default 75 %) and the nearest stock drill in the part's
 * drill set with the % thread it really cuts; close and free clearance; spindle speeds by the
 * part's material; pressure warnings; and the parts grouped by stack. Problems are reported
 * per feature in `errors`, never thrown.
 *
 * @example
 * const r = evaluateFeatures({
 *   format: 'fairsheet.model', version: 1, units: 'mm',
 *   dimensions: [{ name: 'pcd', kind: 'stated', value: 100 }],
 *   parts: [{ id: 'flange', name: 'Flange', material: 'mild-steel' }],
 *   features: [{ id: 'bolts', part: 'flange', kind: 'hole', x: 0, y: 0, drill: '6.6 mm',
 *     pattern: { type: 'circle', count: 6, pcd: 'pcd' } }],
 * });
 * r.features[0].rows[1].x.value // 25 (check-values §10)
 * r.features[0].speed?.rpm      // 964.6 (20 m/min at 6.6 mm)
 */
export function evaluateFeatures(input: unknown, options: SolveOptions = {}): FeaturesResult {
  const parsed = modelSchema.safeParse(input);
  if (!parsed.success) {
    return {
      units: null,
      status: 'invalid',
      parts: [],
      features: [],
      groups: [],
      issues: [{ code: 'schema', message: parsed.error.issues.map((i) => i.message).join('; ') }],
      order: READOUT_ORDER,
    };
  }
  const expansion = expandFeatures(parsed.data);
  const solved = solveExpansion(expansion, options);
  const reader = new LengthReader(solved, expansion.kindOf);
  const features = readFeatures(expansion, solved, reader);
  const parts = readParts(expansion, features, reader);
  return {
    units: parsed.data.units,
    status: solved.status,
    parts,
    features,
    groups: groupStacks(parts, features),
    issues: expansion.issues.all(features),
    order: READOUT_ORDER,
  };
}
