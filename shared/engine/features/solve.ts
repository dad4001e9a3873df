/**
 * Step 2, solve: the expanded model solved once, like any other model, so every position has
 * its value, worst case, RSS, contributors and trace from the same engine. Errors of hidden
 * relations go back to the field they came from.
 */
import type { SolveResult, SolveStatus } from '../result';
import { prepareModel, solvePrepared, type SolveOptions } from '../solve';
import type { Expansion, Slot } from './expand';

export interface SolvedExpansion {
  readonly result: SolveResult;
  readonly slotByName: ReadonlyMap<string, Slot>;
  /**
   * The status of the model's own solve: errors, gaps and contradictions of the hidden
   * positions are the features' (noted beside them), not the drawing's.
   */
  readonly status: SolveStatus;
}

/**
 * Solves the expanded model and notes each hidden relation's error beside its field, with the
 * offset moved back into the field's own text.
 *
 * @example solveExpansion(expandFeatures(model)).status // 'solved'
 */
export function solveExpansion(expansion: Expansion, options: SolveOptions = {}): SolvedExpansion {
  const { issues, prefix } = expansion;
  // The model was read already; its hidden positions are not counted against the model's size
  // limits (a model at its limit with features still has its shop sheet).
  const result = solvePrepared(prepareModel(expansion.expanded), options);
  const slotByName = new Map(expansion.slots.map((s) => [s.name, s]));
  for (const e of result.errors) {
    const slot = e.relation ? slotByName.get(e.relation) : undefined;
    if (!slot) continue;
    const key = slot.feature ?? `part:${slot.part}`;
    issues.note(key, {
      code: e.code === 'unit-mismatch' ? 'unit-mismatch' : 'expression',
      message: `${slot.field}: ${e.message}`,
      field: slot.field,
      // The relation reads `<hidden name> = <field>`: 3 characters besides the name.
      ...(e.at !== undefined && { at: Math.max(0, e.at - slot.name.length - 3) }),
      ...(slot.feature ? { feature: slot.feature } : {}),
      ...(slot.part ? { part: slot.part } : {}),
    });
  }
  const userErrors = result.errors.filter((e) => !(e.relation && slotByName.has(e.relation)));
  const userOpen = result.undetermined.filter((n) => !n.startsWith(prefix));
  const status: SolveStatus = userErrors.length
    ? 'invalid'
    : result.contradictions.length
      ? 'contradictory'
      : userOpen.length
        ? 'incomplete'
        : 'solved';
  return { result, slotByName, status };
}
