/**
 * What a derived value rests on, written canonically: the relations that produced it and every
 * given dimension upstream (as written, with its tolerance), the model unit and the implied
 * tolerance rules. A second person's check records its hash; any upstream change gives another
 * text, so the check is void without anyone having to remember.
 */
import type { FairsheetModelInput } from './model';
import type { SolveResult } from './result';

const fieldsOfGiven = ['kind', 'quantity', 'value', 'tol', 'tolMinus', 'tolPlus'] as const;

/**
 * The canonical text of everything upstream of `name`, or null when it is not solved.
 *
 * @example upstreamText(model, solveModel(model), 'slot') // '{"units":"in","relations":[…],"inputs":[…]}'
 */
export function upstreamText(
  model: FairsheetModelInput,
  result: SolveResult,
  name: string,
): string | null {
  const v = result.values[name];
  if (!v || v.value === null || v.kind !== 'derived') return null;
  const byName = new Map(model.dimensions.map((d) => [d.name, d as Record<string, unknown>]));
  const relations = [...v.trace.relations]
    .map((r) => ({ id: r.id, expr: r.expr.replace(/\s+/g, ' ').trim() }))
    .sort((a, b) => a.id.localeCompare(b.id));
  const inputs = [...v.trace.inputs]
    .map((i) => {
      const d = byName.get(i.name) ?? {};
      const written: Record<string, unknown> = { name: i.name };
      for (const f of fieldsOfGiven) if (d[f] !== undefined) written[f] = d[f];
      return written;
    })
    .sort((a, b) => String(a.name).localeCompare(String(b.name)));
  return JSON.stringify({
    units: model.units,
    defaults: model.defaults ?? null,
    relations,
    inputs,
  });
}
