/**
 * Relations between dimensions: `overall = boss + slot + web`.
 *
 * Text is parsed by one private mathjs instance that has only the parser (parse, never
 * evaluate: no function of mathjs ever runs on a user's string). The tree is then walked
 * against an allow-list (numbers, unit literals, dimension names, + − × ÷ ^, parentheses,
 * sqrt, abs, min, max, hypot, trigonometry in degrees, pi) and compiled into plain closures,
 * with forward-mode derivatives for the solver's Jacobians. Anything else is refused with the
 * character offset of the offending token.
 *
 * Units: internally every length is in the model unit and every angle in degrees, so a bare
 * number in a relation means "in the model unit" and needs no conversion. A unit literal
 * (`3/16 in`, `2 mm`, `30 deg`, `30°`, `1/8"`) is converted to the model unit. Lengths,
 * angles and plain numbers are checked: a length plus an angle is a unit mismatch. Angles
 * behave as tagged plain numbers (an angle plus a count is fine, `360 / n` may be an angle).
 *
 * One file a stage, in the order text goes through them:
 *
 *   limits.ts      sizes checked while the text is read (`EXPRESSION_LIMITS`)
 *   lex.ts         text → tokens with offsets; forbidden characters and words refused
 *   parse.ts       tokens → mathjs tree → checked `ExprNode` (allow-list, offsets); the cache
 *   bind.ts        names → dimensions, unit checks, constant folding
 *   compile.ts     affine coefficients, or closures for value and magnitude
 *   gradient.ts    forward-mode derivatives
 *   diagnose.ts    which operation gives no finite number, and where
 *   vocabulary.ts, arithmetic.ts, error.ts: the words, the arithmetic and the error they share
 */
export { EXPRESSION_LIMITS } from './limits';
export { ExpressionError, type ExpressionErrorCode } from './error';
export {
  RESERVED_NAMES,
  type ExprNode,
  type FunctionName,
  type ParsedRelation,
  type UnitSymbol,
} from './vocabulary';
export { clearRelationCache, parseExpression, parseRelation } from './parse';
export { bindRelation, type SymbolInfo, type SymbolQuantity, type UnitDim } from './bind';
export type { CompiledRelation } from './compile';
export { cosDeg, sinDeg } from './arithmetic';
