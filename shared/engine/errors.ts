/**
 * The one family of errors the engine throws. Each carries a code (which refusal), a message
 * for the builder and a location: whichever of the relation, the dimension, the character
 * offset, the point indices or the input applies. Each module's own class (QuantityError,
 * ExpressionError, CalibrationError, ThreadError, DrillError, ShopMathError) extends it, so
 * `instanceof` the module's class keeps working and a caller can catch all of them as one.
 *
 * A solve never throws for bad input: it reports the same facts as data in its result's
 * `errors` (result.ts `SolveError`, the entry type the API's schema checks).
 */

/** Where in the input an error is; only what applies is present. */
export interface EngineErrorLocation {
  /** The relation's id. */
  readonly relation?: string;
  /** The dimension's name. */
  readonly dimension?: string;
  /** The character offset in the text read (0-based). */
  readonly at?: number;
  /** Indices of the points at fault (calibration). */
  readonly points?: readonly number[];
  /** Which argument or written input was refused. */
  readonly input?: string;
}

/**
 * The base of every engine error.
 *
 * @example
 * try { parseQuantity('3/0') } catch (e) {
 *   if (e instanceof EngineError) e.code // 'bad-quantity', e.location.at // 2
 * }
 */
export class EngineError<Code extends string = string> extends Error {
  constructor(
    readonly code: Code,
    message: string,
    readonly location: EngineErrorLocation = {},
  ) {
    super(message);
    this.name = 'EngineError';
  }
}
