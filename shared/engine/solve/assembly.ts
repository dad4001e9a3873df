/**
 * Assembly: the result format v1 from a solution, its stack-ups, traces and reconciliation:
 * every value (given, derived with its stack-up, open), what is still open, and the status.
 */
import type {
  Check,
  Contradiction,
  SolveError,
  SolveResult,
  SolveStatus,
  ValueResult,
} from '../result';
import { stackUp, type Sensitivity } from '../stackup';
import type { Solution } from './blocks';
import type { Traces } from './traces';

/** The given values as the stack-up reads them, by dimension index. */
export interface GivenBands {
  /** 1 for a given value that could be read. */
  readonly isGiven: Uint8Array;
  readonly halfBand: Float64Array;
  /** Centre shift of an unequal tolerance (0 for a symmetric one). */
  readonly shift: Float64Array;
}

/**
 * The given values' flags, half-bands and centre shifts.
 *
 * @example givenBands(prep).halfBand[0] // 0.003
 */
export function givenBands(prep: Solution['prep']): GivenBands {
  const dims = prep.dimensions;
  const isGiven = new Uint8Array(dims.length);
  const halfBand = new Float64Array(dims.length);
  const shift = new Float64Array(dims.length);
  for (const d of dims) {
    if (d.given && !d.broken) isGiven[d.index] = 1;
    halfBand[d.index] = d.halfBand;
    shift[d.index] = d.shift;
  }
  return { isGiven, halfBand, shift };
}

const NO_TRACE = () => ({ relations: [], inputs: [] });

/** Every dimension's value: given, derived with its stack-up and trace, or open (null). */
function assembleValues(
  sol: Solution,
  traces: Traces,
  sens: ReadonlyArray<Sensitivity | undefined>,
  bands: GivenBands,
  valuesOnly: boolean,
): Record<string, ValueResult> {
  const { prep, blocks, x } = sol;
  const dims = prep.dimensions;
  const { blockOf } = traces;
  const values: Record<string, ValueResult> = {};
  for (const d of dims) {
    const base = { kind: d.kind, quantity: d.quantity };
    if (d.given) {
      const v: ValueResult = {
        value: d.broken ? null : d.value,
        worstCase: d.broken ? null : d.halfBand,
        rss: d.broken ? null : d.halfBand,
        ...base,
        from: [],
        contributors: [],
        trace: NO_TRACE(),
      };
      if (d.tolPlus !== undefined && d.tolMinus !== undefined && d.shift !== 0) {
        v.tolPlus = d.tolPlus;
        v.tolMinus = d.tolMinus;
        v.mean = d.value + d.shift;
      }
      values[d.name] = v;
      continue;
    }
    // blockOf and x have an entry for every dimension; blockOf's is a block's index or −1.
    const bi = blockOf[d.index]!;
    const block = bi >= 0 ? blocks[bi] : undefined;
    const value = x[d.index]!;
    const s: Sensitivity | undefined = sens[d.index];
    if (block?.ok && valuesOnly && Number.isFinite(value)) {
      values[d.name] = {
        value,
        worstCase: null,
        rss: null,
        ...base,
        from: block.ids,
        contributors: [],
        trace: NO_TRACE(),
      };
      continue;
    }
    if (!block?.ok || !s || !Number.isFinite(value)) {
      values[d.name] = {
        value: null,
        worstCase: null,
        rss: null,
        ...base,
        from: block ? block.ids : [],
        contributors: [],
        trace: NO_TRACE(),
      };
      continue;
    }
    const st = stackUp(s, bands.halfBand, bands.shift);
    const v: ValueResult = {
      value,
      worstCase: st.worstCase,
      rss: st.rss,
      ...base,
      from: block.ids,
      contributors: st.terms.map((t) => ({
        name: dims[t.index]!.name,
        sensitivity: t.sensitivity,
        share: t.share,
      })),
      trace: traces.block(bi),
    };
    if (st.meanShift !== 0) {
      v.mean = value + st.meanShift;
      v.tolPlus = st.meanShift + st.worstCase;
      v.tolMinus = st.worstCase - st.meanShift;
    }
    values[d.name] = v;
  }
  return values;
}

/**
 * The result of a solved model (without its Monte Carlo, added after). `invalid` (any error) >
 * `contradictory` > `incomplete` > `solved`.
 *
 * @example assembleResult(sol, traces, sens, bands, errors, reconciled, false).status // 'solved'
 */
export function assembleResult(
  sol: Solution,
  traces: Traces,
  sens: ReadonlyArray<Sensitivity | undefined>,
  bands: GivenBands,
  errors: SolveError[],
  reconciled: { contradictions: Contradiction[]; checks: Check[] },
  valuesOnly: boolean,
): SolveResult {
  const { prep, structure, unknownDims } = sol;
  const dims = prep.dimensions;
  const values = assembleValues(sol, traces, sens, bands, valuesOnly);
  // The structure's indices count the model's unknowns and relations.
  const nameOf = (u: number) => dims[unknownDims[u]!]!.name;
  const undetermined = structure.underdetermined.flatMap((g) => g.unknowns.map(nameOf));
  const openGroups = structure.underdetermined.map((g) => ({
    unknowns: g.unknowns.map(nameOf),
    needs: g.needs,
    measure: g.measure.map(nameOf),
    relations: g.relations.map((r) => prep.relations[r]!.id),
  }));
  const { contradictions, checks } = reconciled;
  const status: SolveStatus = errors.length
    ? 'invalid'
    : contradictions.length
      ? 'contradictory'
      : structure.needs > 0
        ? 'incomplete'
        : 'solved';
  return {
    status,
    units: prep.unit,
    values,
    contradictions,
    checks,
    undetermined,
    needs: structure.needs,
    openGroups,
    errors,
  };
}
