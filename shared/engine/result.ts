/**
 * The result format v1 of solving a model. Numbers are in the model unit; angles in degrees;
 * residuals in the unit of their relation (a length relation's residual is a length).
 */
import type { DimensionKind, QuantityKind } from './model';
import type { ModelUnit } from './length';

/** `invalid` (any error) > `contradictory` > `incomplete` > `solved`. */
export type SolveStatus = 'invalid' | 'contradictory' | 'incomplete' | 'solved';

export interface Contributor {
  name: string;
  /** ∂(derived value)/∂(given value). */
  sensitivity: number;
  /** Share of the RSS variance, (s·t)² / Σ(s·t)²; shares of a value sum to 1. */
  share: number;
}

export interface ValueTrace {
  /** Every relation on the way from the given values, in solving order. */
  relations: Array<{ id: string; expr: string }>;
  /** The given values it was derived from. */
  inputs: Array<{ name: string; value: number }>;
}

export interface ValueResult {
  /** Null for a derived value the relations cannot fix (see `undetermined`) or that failed. */
  value: number | null;
  /** ± worst case: Σ|sᵢ|·tᵢ (a given value: its own half-band). */
  worstCase: number | null;
  /** ± RSS at the same 3σ level as the tolerances: √Σ(sᵢ·tᵢ)². */
  rss: number | null;
  kind: DimensionKind;
  quantity: QuantityKind;
  /** Relation ids of the block that fixed this value ([] for a given value). */
  from: string[];
  /** Given values it depends on, largest share first. */
  contributors: Contributor[];
  trace: ValueTrace;
  /**
   * Present when a tolerance is unequal: limits relative to `value` (value + tolPlus,
   * value − tolMinus) and the centre of the band. Stack-up uses the half-band
   * (tolPlus + tolMinus)/2 about the centre; a derived value's centre moves by Σ sᵢ·shiftᵢ.
   */
  tolPlus?: number;
  tolMinus?: number;
  mean?: number;
}

export interface Suspect {
  name: string;
  /**
   * Fraction (0…1) of the contradiction's tolerance-weighted misfit that a correction of this
   * value alone removes (1: it explains the contradiction completely).
   */
  score: number;
  /** The amount to add to this value to remove the contradiction, model unit. */
  correction: number;
  /** |correction| in multiples of its own tolerance (null for an exact value). */
  normalised: number | null;
}

export interface Contradiction {
  /** The redundant relation that does not close. */
  relation: string;
  /** It and every relation that produced the values it uses. */
  relations: string[];
  residual: number;
  /** What the inputs' tolerances allow: Σ|∂r/∂gᵢ|·tᵢ over the given inputs. */
  allowed: number;
  suspects: Suspect[];
}

export interface Check {
  relation: string;
  relations: string[];
  residual: number;
  allowed: number;
}

export interface OpenGroup {
  /** Derived names the relations cannot fix. */
  unknowns: string[];
  needs: number;
  /** One set of dimensions that, measured, would fix the group (any one of `unknowns` can stand in). */
  measure: string[];
  relations: string[];
}

export type SolveErrorCode =
  | 'schema'
  | 'duplicate-name'
  | 'reserved-name'
  | 'bad-value'
  | 'syntax'
  | 'forbidden'
  | 'unknown-name'
  | 'unit-mismatch'
  | 'division-by-zero'
  | 'over-limit'
  | 'not-finite'
  | 'singular'
  | 'no-convergence';

/** A refusal or failure a solve reports as data in its result (it never throws for bad input). */
export interface SolveError {
  code: SolveErrorCode;
  message: string;
  relation?: string;
  dimension?: string;
  /** Character offset in the relation's expression (or the dimension's value). */
  at?: number;
  /** For a failed solve: the largest remaining residual. */
  residual?: number;
  /** For a block the time limit stopped before it converged: that limit, ms. */
  timeLimitMs?: number;
}

export interface MonteCarloValue {
  mean: number;
  sigma: number;
  min: number;
  max: number;
  /** edges.length = counts.length + 1. */
  histogram: { edges: number[]; counts: number[] };
}

export interface MonteCarloResult {
  samples: number;
  seed: number;
  /** Samples whose solve failed (left out of the statistics). */
  failed: number;
  values: Record<string, MonteCarloValue>;
}

export interface SolveResult {
  status: SolveStatus;
  units: ModelUnit | null;
  values: Record<string, ValueResult>;
  contradictions: Contradiction[];
  checks: Check[];
  undetermined: string[];
  needs: number;
  /** Per group of undetermined values: how many more dimensions and which to measure. */
  openGroups: OpenGroup[];
  errors: SolveError[];
  monteCarlo?: MonteCarloResult;
}
