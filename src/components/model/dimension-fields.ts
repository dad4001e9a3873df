import { DIMENSION_NAME, RESERVED_NAMES, type FairsheetModelInput } from '@shared/engine';

export type Dimension = FairsheetModelInput['dimensions'][number];
export type GivenDimension = Extract<Dimension, { value: unknown }>;

export function isGiven(d: Dimension): d is GivenDimension {
  return d.kind !== 'derived';
}

/** The tolerance as the builder typed it: `0.005`, `±0.005`, or `-0.002 +0.004`. */
export function toleranceText(d: Dimension): string {
  if (!isGiven(d)) return '';
  if (d.tol !== undefined) return String(d.tol);
  if (d.tolMinus !== undefined && d.tolPlus !== undefined) return `-${d.tolMinus} +${d.tolPlus}`;
  return '';
}

/** Reads a typed tolerance into the model's fields; throws a message for people when it cannot. */
export function parseToleranceText(
  text: string,
): Pick<GivenDimension, 'tol' | 'tolMinus' | 'tolPlus'> {
  const t = text.trim();
  if (!t) return {};
  const pair =
    t.match(/^-\s*([^\s+/,]+)\s*[/, ]?\s*\+\s*(\S+)$/) ??
    t.match(/^\+\s*([^\s/,-]+)\s*[/, ]?\s*-\s*(\S+)$/);
  if (pair) {
    const plusFirst = t.startsWith('+');
    return plusFirst
      ? { tolPlus: pair[1], tolMinus: pair[2] }
      : { tolMinus: pair[1], tolPlus: pair[2] };
  }
  const single = t.match(/^(?:±|\+\/-|\+-)?\s*(.+)$/)?.[1];
  if (single !== undefined && !/[+-]/.test(single.replace(/^-/, 'x')))
    return { tol: single.trim() };
  throw new Error('Write a tolerance as 0.005, ±0.005, or -0.002 +0.004');
}

/** Why a name cannot be used, or null when it can. */
export function nameProblem(name: string, taken: string[]): string | null {
  if (!DIMENSION_NAME.test(name))
    return 'A name starts with a letter or _ and has only letters, digits and _';
  if (RESERVED_NAMES.has(name))
    return `“${name}” is reserved (relations read it as a unit, function or constant)`;
  if (taken.includes(name)) return `“${name}” is already used`;
  return null;
}

/** A fresh name like `dim_4` for a new row. */
export function freshName(taken: string[], stem = 'dim'): string {
  let n = taken.length + 1;
  while (taken.includes(`${stem}_${n}`)) n += 1;
  return `${stem}_${n}`;
}
