/** The error of every expression stage: a code, a message and the offending character. */
import { EngineError } from '../errors';

export type ExpressionErrorCode =
  'syntax' | 'forbidden' | 'unknown-name' | 'unit-mismatch' | 'division-by-zero' | 'over-limit';

/** A refused or unreadable relation; `at` is the character offset of the offending token. */
export class ExpressionError extends EngineError<ExpressionErrorCode> {
  constructor(
    code: ExpressionErrorCode,
    message: string,
    readonly at?: number,
  ) {
    super(code, message, at === undefined ? {} : { at });
    this.name = 'ExpressionError';
  }
}
