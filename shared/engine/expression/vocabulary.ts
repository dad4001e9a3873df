/**
 * What an expression may say: the allowed functions and unit symbols, the marks that stand in
 * for `in`, `"`, `°` and a part-qualifying dot inside the text handed to mathjs, the names a
 * dimension may not take, and the checked tree the parser makes.
 */
export type FunctionName =
  | 'sqrt'
  | 'abs'
  | 'min'
  | 'max'
  | 'hypot'
  | 'sin'
  | 'cos'
  | 'tan'
  | 'asin'
  | 'acos'
  | 'atan'
  | 'atan2';

/** Allowed functions and their argument counts [min, max]. */
export const FUNCTIONS: Record<FunctionName, [number, number]> = {
  sqrt: [1, 1],
  abs: [1, 1],
  min: [1, Infinity],
  max: [1, Infinity],
  hypot: [1, Infinity],
  sin: [1, 1],
  cos: [1, 1],
  tan: [1, 1],
  asin: [1, 1],
  acos: [1, 1],
  atan: [1, 1],
  atan2: [2, 2],
};

export type UnitSymbol = 'mm' | 'cm' | 'inch' | 'thou' | 'mil' | 'ft' | 'deg';
export const UNIT_SYMBOLS: Record<string, UnitSymbol> = {
  mm: 'mm',
  cm: 'cm',
  inch: 'inch',
  thou: 'thou',
  mil: 'mil',
  ft: 'ft',
  deg: 'deg',
};

// mathjs reads `in` as its conversion operator and `"` as a string quote, and has no `°`.
// Before parsing they are replaced, character for character (so offsets stay true), by
// letter-like symbols that mathjs accepts as names and that no dimension name can contain.
export const INCH_MARK = '\u2110';
export const DEG_MARK = '\u2111';
/**
 * Stands for the dot of a part-qualified name (`frame.bolt_x`) inside the text handed to mathjs,
 * which would read the dot as property access; a Latin letter mathjs accepts in symbol names.
 */
export const QUALIFIER_MARK = '\u0298';

/** A name handed to mathjs as the user wrote it, for messages. */
export function shown(name: string): string {
  return name
    .replaceAll(INCH_MARK + INCH_MARK, 'in')
    .replaceAll(INCH_MARK, '"')
    .replaceAll(DEG_MARK, '°')
    .replaceAll(QUALIFIER_MARK, '.');
}

export const OPERATOR_WORDS = new Set(['to', 'mod', 'and', 'or', 'xor', 'not']);
export const CONSTANT_WORDS = new Set(['true', 'false', 'null', 'undefined', 'NaN', 'Infinity']);

/**
 * Names a dimension may not take: unit symbols, functions, pi and words mathjs reads as
 * operators or constants, and `__proto__`, which as a key of a plain object (the solved values
 * by name) sets the object's prototype instead of adding an entry.
 */
export const RESERVED_NAMES: ReadonlySet<string> = new Set([
  'in',
  'pi',
  '__proto__',
  ...Object.keys(UNIT_SYMBOLS),
  ...Object.keys(FUNCTIONS),
  ...OPERATOR_WORDS,
  ...CONSTANT_WORDS,
]);

/** A checked expression tree (names not yet bound to a model). */
export type ExprNode =
  | { t: 'num'; v: number; at: number }
  | { t: 'unit'; unit: UnitSymbol; at: number }
  | { t: 'sym'; name: string; at: number }
  | { t: 'neg'; a: ExprNode; at: number }
  | { t: 'bin'; op: '+' | '-' | '*' | '/' | '^'; a: ExprNode; b: ExprNode; at: number }
  | { t: 'call'; fn: FunctionName; args: ExprNode[]; at: number };

export interface ParsedRelation {
  text: string;
  lhs: ExprNode;
  rhs: ExprNode;
  /** Offset of the `=`. */
  eqAt: number;
  /** Dimension names used, in order of first appearance. */
  names: string[];
}
