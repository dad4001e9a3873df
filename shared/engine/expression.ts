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
 */
import { create, parseDependencies, type MathNode } from 'mathjs';
import { MM_PER_IN, type ModelUnit } from './length';

// One private instance holding only the parser; never the global mathjs instance.
const math = create({ parseDependencies });

export type ExpressionErrorCode =
  'syntax' | 'forbidden' | 'unknown-name' | 'unit-mismatch' | 'division-by-zero' | 'over-limit';

/**
 * How large one expression may be. A drawing's relations are chains of a few to a few dozen
 * names, and a whole locomotive's drawing set has no relation longer than a few lines; these
 * limits are far beyond that. They exist because every walk of a tree here (reading, binding,
 * compiling, evaluating) goes one call deeper per level, and mathjs's own parser about twenty
 * calls deeper per parenthesis: text of any size would otherwise overflow the stack. Each is
 * checked while the text is read, before anything recurses over it.
 */
export const EXPRESSION_LIMITS = Object.freeze({
  /** Characters of an expression (a feature's position), or of one side of a relation. */
  characters: 2000,
  /** Characters of a relation: room for two sides as long as an expression. */
  relationCharacters: 4000,
  /** Parentheses (a function call's own included) open inside one another. */
  nesting: 64,
  /**
   * Operations inside one another. Each `+` of a chain is one level deeper than the last, so
   * this is also the longest sum: 200 terms, where a real chain has a few dozen.
   */
  depth: 200,
  /** Arguments of one min, max or hypot. */
  arguments: 250,
});

const thousands = (n: number) => n.toLocaleString('en-GB');

/** A refused or unreadable relation; `at` is the character offset of the offending token. */
export class ExpressionError extends Error {
  constructor(
    readonly code: ExpressionErrorCode,
    message: string,
    readonly at?: number,
  ) {
    super(message);
    this.name = 'ExpressionError';
  }
}

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
const FUNCTIONS: Record<FunctionName, [number, number]> = {
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
const UNIT_SYMBOLS: Record<string, UnitSymbol> = {
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
const INCH_MARK = '\u2110';
const DEG_MARK = '\u2111';
/**
 * Stands for the dot of a part-qualified name (`frame.bolt_x`) inside the text handed to mathjs,
 * which would read the dot as property access; a Latin letter mathjs accepts in symbol names.
 */
const QUALIFIER_MARK = '\u0298';

/** A name handed to mathjs as the user wrote it, for messages. */
function shown(name: string): string {
  return name
    .replaceAll(INCH_MARK + INCH_MARK, 'in')
    .replaceAll(INCH_MARK, '"')
    .replaceAll(DEG_MARK, '°')
    .replaceAll(QUALIFIER_MARK, '.');
}

const OPERATOR_WORDS = new Set(['to', 'mod', 'and', 'or', 'xor', 'not']);
const CONSTANT_WORDS = new Set(['true', 'false', 'null', 'undefined', 'NaN', 'Infinity']);

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

interface Token {
  kind: 'num' | 'ident' | 'op' | 'paren' | 'comma' | 'eq';
  text: string;
  at: number;
}

const FORBIDDEN_CHARS: Record<string, string> = {
  '.': "'.' is only allowed inside a number (property access is not allowed)",
  '[': 'indexing and matrices are not allowed',
  ']': 'indexing and matrices are not allowed',
  '{': 'objects are not allowed',
  '}': 'objects are not allowed',
  "'": "' is not allowed in a relation (for feet write ft)",
  ';': 'write one relation at a time',
  '?': 'conditionals are not allowed',
  ':': 'ranges and conditionals are not allowed',
  '%': "'%' is not allowed",
  '!': "'!' is not allowed",
  '&': 'bitwise operators are not allowed',
  '|': 'bitwise operators are not allowed',
  '~': 'bitwise operators are not allowed',
  '<': 'comparisons are not allowed; a relation has a single =',
  '>': 'comparisons are not allowed; a relation has a single =',
};

const NUMBER_RE = /(\d+\.?\d*|\.\d+)([eE][+-]?\d+)?/y;
const WORD_RE = /[A-Za-z_][A-Za-z0-9_]*/y;
const DIGIT = /[0-9]/;
const WORD_START = /[A-Za-z_]/;

/**
 * The whole character at i, for a message: both halves of a surrogate pair (an emoji), and
 * U+FFFD for half of one, so a message is always well-formed text.
 */
function characterAt(src: string, i: number): string {
  const c = src.codePointAt(i)!;
  return c >= 0xd800 && c <= 0xdfff ? '\ufffd' : String.fromCodePoint(c);
}

/** Splits a relation into tokens, refusing forbidden characters and words at their offset. */
function lex(src: string): { tokens: Token[]; prepared: string } {
  // Characters to replace for mathjs, by offset; most relations need none.
  let out: string[] | null = null;
  const put = (at: number, c: string) => {
    out ??= src.split('');
    out[at] = c;
  };
  const tokens: Token[] = [];
  // Open parentheses: mathjs's parser recurses about twenty calls per level.
  let depth = 0;
  let i = 0;
  while (i < src.length) {
    const c = src[i];
    if (c === ' ' || c === '\t' || c === '\n' || c === '\r') {
      if (c !== ' ') put(i, ' '); // a newline would start a second mathjs statement
      i++;
      continue;
    }
    if (DIGIT.test(c) || (c === '.' && DIGIT.test(src[i + 1] ?? ''))) {
      if (c === '0' && /[xXbBoO]/.test(src[i + 1] ?? '') && /[0-9a-fA-F]/.test(src[i + 2] ?? '')) {
        throw new ExpressionError(
          'forbidden',
          'hexadecimal, binary and octal numbers are not allowed',
          i,
        );
      }
      NUMBER_RE.lastIndex = i;
      const m = NUMBER_RE.exec(src)!;
      tokens.push({ kind: 'num', text: m[0], at: i });
      i += m[0].length;
      continue;
    }
    if (WORD_START.test(c)) {
      WORD_RE.lastIndex = i;
      const m = WORD_RE.exec(src)!;
      const word = m[0];
      if (OPERATOR_WORDS.has(word))
        throw new ExpressionError('forbidden', `operator '${word}' is not allowed`, i);
      if (CONSTANT_WORDS.has(word))
        throw new ExpressionError('forbidden', `'${word}' is not allowed`, i);
      const dot = i + word.length;
      if (src[dot] === '.' && WORD_START.test(src[dot + 1] ?? '')) {
        // A part-qualified name, e.g. `hornblock.bolt_x`: one identifier.
        WORD_RE.lastIndex = dot + 1;
        const member = WORD_RE.exec(src)![0];
        put(dot, QUALIFIER_MARK);
        tokens.push({ kind: 'ident', text: `${word}${QUALIFIER_MARK}${member}`, at: i });
        i = dot + 1 + member.length;
        continue;
      }
      if (word === 'in') {
        put(i, INCH_MARK);
        put(i + 1, INCH_MARK);
        tokens.push({ kind: 'ident', text: INCH_MARK + INCH_MARK, at: i });
      } else {
        tokens.push({ kind: 'ident', text: word, at: i });
      }
      i += word.length;
      continue;
    }
    if (c === '"' || c === '°') {
      const mark = c === '"' ? INCH_MARK : DEG_MARK;
      put(i, mark);
      tokens.push({ kind: 'ident', text: mark, at: i });
      i++;
      continue;
    }
    if ('+-*/^'.includes(c)) {
      if ((c === '*' || c === '/') && src[i + 1] === c) {
        throw new ExpressionError('forbidden', `'${c}${c}' is not allowed`, i);
      }
      tokens.push({ kind: 'op', text: c, at: i });
      i++;
      continue;
    }
    if (c === '(' || c === ')') {
      depth += c === '(' ? 1 : -1;
      if (depth > EXPRESSION_LIMITS.nesting) {
        throw new ExpressionError(
          'over-limit',
          `parentheses are nested more than ${EXPRESSION_LIMITS.nesting} deep`,
          i,
        );
      }
      tokens.push({ kind: 'paren', text: c, at: i });
      i++;
      continue;
    }
    if (c === ',') {
      tokens.push({ kind: 'comma', text: c, at: i });
      i++;
      continue;
    }
    if (c === '=') {
      if (src[i + 1] === '=') {
        throw new ExpressionError(
          'forbidden',
          "comparison '==' is not allowed; a relation has a single =",
          i,
        );
      }
      tokens.push({ kind: 'eq', text: c, at: i });
      i++;
      continue;
    }
    if ((c === '<' || c === '>' || c === '!') && src[i + 1] === '=') {
      throw new ExpressionError(
        'forbidden',
        'comparisons are not allowed; a relation has a single =',
        i,
      );
    }
    const why = FORBIDDEN_CHARS[c];
    throw new ExpressionError(
      why ? 'forbidden' : 'syntax',
      why ?? `unexpected character '${characterAt(src, i)}'`,
      i,
    );
  }
  return { tokens, prepared: out ? (out as string[]).join('') : src };
}

const OPS: Record<string, '+' | '-' | '*' | '/' | '^'> = {
  add: '+',
  subtract: '-',
  multiply: '*',
  divide: '/',
  pow: '^',
};

/**
 * Converts one side's mathjs tree to an ExprNode, matching tokens in order for offsets.
 * Token-bearing nodes in an in-order walk of the tree come in source order, so the k-th
 * number/name/operator node corresponds to the k-th such token.
 */
class SideReader {
  private readonly seq: Token[];
  private k = 0;
  private aligned = true;
  constructor(
    tokens: Token[],
    private readonly fallbackAt: number,
  ) {
    this.seq = tokens.filter((t) => t.kind === 'num' || t.kind === 'ident' || t.kind === 'op');
  }

  private take(kind: Token['kind'], text?: string): number {
    const t = this.seq[this.k];
    if (this.aligned && t && t.kind === kind && (text === undefined || t.text === text)) {
      this.k++;
      return t.at;
    }
    this.aligned = false;
    return this.here();
  }

  private here(): number {
    return this.seq[Math.min(this.k, this.seq.length - 1)]?.at ?? this.fallbackAt;
  }

  /** `depth`: operations above this node (parentheses add none: the lexer bounds them). */
  walk(n: MathNode, depth = 0): ExprNode {
    if (depth > EXPRESSION_LIMITS.depth) {
      throw new ExpressionError(
        'over-limit',
        `more than ${EXPRESSION_LIMITS.depth} operations inside one another (each + or - of a ` +
          'chain is one more): split it into shorter relations',
        this.here(),
      );
    }
    switch (n.type) {
      case 'ParenthesisNode':
        return this.walk((n as unknown as { content: MathNode }).content, depth);
      case 'ConstantNode': {
        const v = (n as unknown as { value: unknown }).value;
        const at = this.take('num');
        if (typeof v !== 'number' || !Number.isFinite(v)) {
          throw new ExpressionError('forbidden', 'only numbers are allowed as constants', at);
        }
        return { t: 'num', v, at };
      }
      case 'SymbolNode': {
        const name = (n as unknown as { name: string }).name;
        const at = this.take('ident', name);
        if (name === INCH_MARK || name === INCH_MARK + INCH_MARK)
          return { t: 'unit', unit: 'inch', at };
        if (name === DEG_MARK) return { t: 'unit', unit: 'deg', at };
        if (name.includes(INCH_MARK) || name.includes(DEG_MARK)) {
          // mathjs reads `"abc"` or `a°` as one name with the marks inside it.
          throw new ExpressionError(
            'forbidden',
            `" and ° are unit marks: write them right after a number (1/8", 30°); text in quotes is not allowed`,
            at,
          );
        }
        // Own keys only: `toString` or `constructor` are names, not units or functions.
        if (Object.hasOwn(UNIT_SYMBOLS, name)) return { t: 'unit', unit: UNIT_SYMBOLS[name], at };
        if (name === 'pi') return { t: 'num', v: Math.PI, at };
        if (Object.hasOwn(FUNCTIONS, name)) {
          throw new ExpressionError('forbidden', `${name} is a function: write ${name}(…)`, at);
        }
        return { t: 'sym', name: name.replace(QUALIFIER_MARK, '.'), at };
      }
      case 'OperatorNode': {
        const op = n as unknown as { fn: string; op: string; args: MathNode[]; implicit?: boolean };
        if (op.fn === 'unaryMinus' || op.fn === 'unaryPlus') {
          const at = this.take('op', op.op);
          const a = this.walk(op.args[0], depth + 1);
          return op.fn === 'unaryMinus' ? { t: 'neg', a, at } : a;
        }
        const sym = OPS[op.fn];
        if (!sym || op.args.length !== 2) {
          throw new ExpressionError('forbidden', `operator '${op.op}' is not allowed`, this.here());
        }
        const a = this.walk(op.args[0], depth + 1);
        const at = op.implicit ? this.here() : this.take('op', op.op);
        const b = this.walk(op.args[1], depth + 1);
        return { t: 'bin', op: sym, a, b, at };
      }
      case 'FunctionNode': {
        const f = n as unknown as { fn: MathNode; args: MathNode[] };
        if (f.fn.type !== 'SymbolNode') {
          throw new ExpressionError('forbidden', 'only named functions can be called', this.here());
        }
        const name = (f.fn as unknown as { name: string }).name;
        const at = this.take('ident', name);
        const arity = Object.hasOwn(FUNCTIONS, name) ? FUNCTIONS[name as FunctionName] : null;
        if (!arity) {
          throw new ExpressionError(
            'forbidden',
            `unknown function '${shown(name)}' (allowed: ${Object.keys(FUNCTIONS).join(', ')})`,
            at,
          );
        }
        if (f.args.length < arity[0] || f.args.length > arity[1]) {
          const want = arity[0] === arity[1] ? `${arity[0]}` : `at least ${arity[0]}`;
          throw new ExpressionError(
            'syntax',
            `${name} takes ${want} argument${arity[0] === 1 && arity[1] === 1 ? '' : 's'}`,
            at,
          );
        }
        if (f.args.length > EXPRESSION_LIMITS.arguments) {
          throw new ExpressionError(
            'over-limit',
            `${name} takes at most ${EXPRESSION_LIMITS.arguments} arguments; this call has ${thousands(f.args.length)}`,
            at,
          );
        }
        return {
          t: 'call',
          fn: name as FunctionName,
          args: f.args.map((a) => this.walk(a, depth + 1)),
          at,
        };
      }
      case 'AssignmentNode':
        throw new ExpressionError(
          'forbidden',
          'assignment is not allowed inside a relation',
          this.here(),
        );
      case 'FunctionAssignmentNode':
        throw new ExpressionError('forbidden', 'function definitions are not allowed', this.here());
      case 'AccessorNode':
      case 'IndexNode':
        throw new ExpressionError(
          'forbidden',
          'property access and indexing are not allowed',
          this.here(),
        );
      case 'ArrayNode':
        throw new ExpressionError('forbidden', 'matrices are not allowed', this.here());
      default:
        throw new ExpressionError(
          'forbidden',
          `${n.type.replace(/Node$/, '').toLowerCase()} expressions are not allowed`,
          this.here(),
        );
    }
  }
}

/** mathjs parse, with its syntax errors turned into ours (offset from 0, not 1). */
function mathParse(text: string): MathNode {
  try {
    return math.parse(text);
  } catch (e) {
    // The limits above keep mathjs's recursion shallow; should a caller's own stack be nearly
    // full already, the overflow is still this relation's refusal, not the caller's crash.
    if (e instanceof RangeError) {
      throw new ExpressionError('over-limit', 'this expression is too deeply nested to read', 0);
    }
    const err = e as { message?: string; char?: number };
    const at = typeof err.char === 'number' ? Math.max(0, Math.min(err.char - 1, text.length)) : 0;
    const message = (err.message ?? 'syntax error').replace(/\s*\(char \d+\)\s*$/, '');
    throw new ExpressionError('syntax', message.charAt(0).toLowerCase() + message.slice(1), at);
  }
}

function collectNames(n: ExprNode, into: string[], seen: Set<string>): void {
  switch (n.t) {
    case 'sym':
      if (!seen.has(n.name)) {
        seen.add(n.name);
        into.push(n.name);
      }
      return;
    case 'neg':
      collectNames(n.a, into, seen);
      return;
    case 'bin':
      collectNames(n.a, into, seen);
      collectNames(n.b, into, seen);
      return;
    case 'call':
      for (const a of n.args) collectNames(a, into, seen);
      return;
    default:
      return;
  }
}

/** Refuses text over `limit` characters, at the first character past it. */
function checkLength(text: string, limit: number, what: string): void {
  if (text.length > limit) {
    throw new ExpressionError(
      'over-limit',
      `${what} is at most ${thousands(limit)} characters; this one has ${thousands(text.length)}`,
      limit,
    );
  }
}

/** Parsed relations by text: re-solving on every keystroke re-parses only what changed. */
const cache = new Map<string, ParsedRelation | ExpressionError>();
const CACHE_LIMIT = 20_000;
/**
 * Characters of all cached texts. A tree takes some fifty times its text's size, so 20,000
 * relations at the character limit would hold gigabytes; real ones (a few dozen characters
 * each) fill the entries long before this.
 */
const CACHE_CHARACTERS = 2_000_000;
let cachedCharacters = 0;

/**
 * Forgets cached parses (benchmarks call it to measure cold solves).
 *
 * @example clearRelationCache()
 */
export function clearRelationCache(): void {
  cache.clear();
  cachedCharacters = 0;
}

/**
 * Parses and checks a relation `lhs = rhs`. Throws ExpressionError with the offset of the
 * offending token. Results are cached by text.
 *
 * @example parseRelation('overall = boss + slot').names // ['overall', 'boss', 'slot']
 * @example parseRelation('x = a.b') // throws ExpressionError { code: 'forbidden', at: 5 }
 */
export function parseRelation(text: string): ParsedRelation {
  // Before the cache: a refused text is not kept (a megabyte each would fill it).
  checkLength(text, EXPRESSION_LIMITS.relationCharacters, 'a relation');
  const hit = cache.get(text);
  if (hit) {
    if (hit instanceof ExpressionError) throw hit;
    return hit;
  }
  let result: ParsedRelation | ExpressionError;
  try {
    result = parseRelationUncached(text);
  } catch (e) {
    if (!(e instanceof ExpressionError)) throw e;
    result = e;
  }
  while (
    cache.size > 0 &&
    (cache.size >= CACHE_LIMIT || cachedCharacters + text.length > CACHE_CHARACTERS)
  ) {
    const oldest = cache.keys().next().value as string;
    cache.delete(oldest);
    cachedCharacters -= oldest.length;
  }
  cache.set(text, result);
  cachedCharacters += text.length;
  if (result instanceof ExpressionError) throw result;
  return result;
}

function parseRelationUncached(text: string): ParsedRelation {
  const { tokens, prepared } = lex(text);
  const eqs = tokens.filter((t) => t.kind === 'eq');
  if (eqs.length === 0)
    throw new ExpressionError('syntax', "a relation needs '=' between its two sides", text.length);
  if (eqs.length > 1)
    throw new ExpressionError('forbidden', "a relation has a single '='", eqs[1].at);
  const eqAt = eqs[0].at;
  if (prepared.slice(0, eqAt).trim() === '')
    throw new ExpressionError('syntax', 'the left side is empty', 0);
  if (prepared.slice(eqAt + 1).trim() === '')
    throw new ExpressionError('syntax', 'the right side is empty', text.length);
  // One mathjs parse for both sides: '=' becomes '<', the loosest operator the lexer lets
  // through (it refuses any other comparison), so the root is exactly (lhs) < (rhs).
  const root = mathParse(prepared.slice(0, eqAt) + '<' + prepared.slice(eqAt + 1)) as MathNode & {
    fn?: string;
    args?: MathNode[];
  };
  if (root.type !== 'OperatorNode' || root.fn !== 'smaller' || root.args?.length !== 2) {
    throw new ExpressionError('syntax', 'a relation is one expression = another', eqAt);
  }
  const reader = new SideReader(tokens, 0);
  const lhs = reader.walk(root.args[0]);
  const rhs = reader.walk(root.args[1]);
  const names: string[] = [];
  const seen = new Set<string>();
  collectNames(lhs, names, seen);
  collectNames(rhs, names, seen);
  return { text, lhs, rhs, eqAt, names };
}

/**
 * Parses and checks a single expression (no `=`), e.g. for a formula field.
 *
 * @example parseExpression('hypot(a, b) / 2').t // 'bin'
 */
export function parseExpression(text: string): ExprNode {
  checkLength(text, EXPRESSION_LIMITS.characters, 'an expression');
  const { tokens, prepared } = lex(text);
  const eq = tokens.find((t) => t.kind === 'eq');
  if (eq) throw new ExpressionError('forbidden', "'=' is not allowed in an expression", eq.at);
  if (prepared.trim() === '') throw new ExpressionError('syntax', 'the expression is empty', 0);
  return new SideReader(tokens, 0).walk(mathParse(prepared));
}

// ---------------------------------------------------------------------------------------
// Binding to a model: names → dimensions, unit checks, compilation to closures.

/** Powers of length and angle; null is a bare number that adapts to its neighbour. */
export interface UnitDim {
  L: number;
  A: number;
}

export type SymbolQuantity = 'length' | 'angle' | 'count';

export interface SymbolInfo {
  /** The dimension's index in the solver's value array. */
  index: number;
  quantity: SymbolQuantity;
}

type BNode =
  | { t: 'num'; v: number }
  | { t: 'var'; j: number; gi: number; at: number }
  | { t: 'neg'; a: BNode }
  | { t: 'bin'; op: '+' | '-' | '*' | '/' | '^'; a: BNode; b: BNode; at: number }
  | { t: 'call'; fn: FunctionName; args: BNode[]; at: number };

export interface CompiledRelation {
  text: string;
  /** Global indices of the dimensions used, in local order. */
  vars: Int32Array;
  names: string[];
  /** When the residual is affine in all its variables: residual = c + Σ a[j]·x[vars[j]]. */
  affine: { c: number; a: Float64Array } | null;
  /** lhs − rhs at the global value array x. */
  residual(x: Float64Array): number;
  /** The magnitude the residual is judged against (sum of the sizes of its terms). */
  scale(x: Float64Array): number;
  /** Residual, with ∂residual/∂x[vars[j]] written to g[j]. */
  gradient(x: Float64Array, g: Float64Array): number;
  /** 0: no variable of the mask occurs; 1: affine in them (others fixed); 2: non-linear. */
  degreeIn(inMask: (globalIndex: number) => boolean): 0 | 1 | 2;
  /** Why evaluation at x gives no finite number (division by zero, …), or null. */
  diagnose(
    x: Float64Array,
  ): { code: ExpressionErrorCode | 'not-finite'; message: string; at?: number } | null;
}

const D2R = Math.PI / 180;
const R2D = 180 / Math.PI;

/** Sine of degrees, exact at multiples of 30° (so sin 30° is 0.5, cos 90° is 0). */
export function sinDeg(d: number): number {
  const r = ((d % 360) + 360) % 360;
  if (r % 30 === 0) return SIN30[r / 30];
  return Math.sin(d * D2R);
}
/** Cosine of degrees, exact at multiples of 30°. */
export function cosDeg(d: number): number {
  return sinDeg(d + 90);
}
const H = Math.sqrt(3) / 2;
const SIN30 = [0, 0.5, H, 1, H, 0.5, 0, -0.5, -H, -1, -H, -0.5];

function tanDeg(d: number): number {
  const r = ((d % 180) + 180) % 180;
  if (r === 90) return Infinity;
  if (r === 0) return 0;
  if (r === 45) return 1;
  if (r === 135) return -1;
  return Math.tan(d * D2R);
}

function applyFn(fn: FunctionName, v: number[]): number {
  switch (fn) {
    case 'sqrt':
      return Math.sqrt(v[0]);
    case 'abs':
      return Math.abs(v[0]);
    // v has at most EXPRESSION_LIMITS.arguments entries (checked when read): the spreads below
    // stay far inside the engine's argument limit.
    case 'min':
      return Math.min(...v);
    case 'max':
      return Math.max(...v);
    case 'hypot':
      return Math.hypot(...v);
    case 'sin':
      return sinDeg(v[0]);
    case 'cos':
      return cosDeg(v[0]);
    case 'tan':
      return tanDeg(v[0]);
    case 'asin':
      return Math.asin(v[0]) * R2D;
    case 'acos':
      return Math.acos(v[0]) * R2D;
    case 'atan':
      return Math.atan(v[0]) * R2D;
    case 'atan2':
      return Math.atan2(v[0], v[1]) * R2D;
  }
}

function describe(d: UnitDim | null): string {
  if (!d) return 'a number';
  if (d.L === 1 && d.A === 0) return 'a length';
  if (d.L === 0 && d.A === 1) return 'an angle';
  if (d.L === 0 && d.A === 0) return 'a number';
  const parts: string[] = [];
  if (d.L !== 0) parts.push(d.L === 1 ? 'length' : `length^${d.L}`);
  if (d.A !== 0) parts.push(d.A === 1 ? 'angle' : `angle^${d.A}`);
  return `a ${parts.join('·')}`;
}

const LENGTH: UnitDim = Object.freeze({ L: 1, A: 0 });
const ANGLE: UnitDim = Object.freeze({ L: 0, A: 1 });
const PLAIN: UnitDim = Object.freeze({ L: 0, A: 0 });

/** Lengths must match in power; an angle is a tagged plain number, so it matches one. */
function compatible(x: UnitDim | null, y: UnitDim | null): boolean {
  if (!x || !y) return true;
  return Math.abs(x.L - y.L) < 1e-12 && (Math.abs(x.A - y.A) < 1e-12 || x.A === 0 || y.A === 0);
}

function merge(x: UnitDim | null, y: UnitDim | null): UnitDim | null {
  if (!x) return y;
  if (!y) return x;
  return { L: x.L, A: x.A !== 0 ? x.A : y.A };
}

/** Length of one unit symbol in the model unit (angles in degrees). */
function unitFactor(u: UnitSymbol, unit: ModelUnit): { v: number; dim: UnitDim } {
  const len = (mm: number, inch: number) => ({ v: unit === 'mm' ? mm : inch, dim: { L: 1, A: 0 } });
  switch (u) {
    case 'mm':
      return len(1, 1 / MM_PER_IN);
    case 'cm':
      return len(10, 10 / MM_PER_IN);
    case 'inch':
      return len(MM_PER_IN, 1);
    case 'thou':
    case 'mil':
      return len(0.0254, 0.001);
    case 'ft':
      return len(304.8, 12);
    case 'deg':
      return { v: 1, dim: { L: 0, A: 1 } };
  }
}

function isConst(n: BNode): n is { t: 'num'; v: number } {
  return n.t === 'num';
}

/** Resolves names, checks units and folds constants over a parsed relation. */
class Binder {
  readonly localOf = new Map<string, number>();
  readonly vars: number[] = [];
  readonly names: string[] = [];
  constructor(
    private readonly resolve: (name: string) => SymbolInfo | undefined,
    private readonly unit: ModelUnit,
  ) {}

  bind(n: ExprNode): { node: BNode; dim: UnitDim | null } {
    switch (n.t) {
      case 'num':
        return { node: { t: 'num', v: n.v }, dim: null };
      case 'unit': {
        const f = unitFactor(n.unit, this.unit);
        return { node: { t: 'num', v: f.v }, dim: f.dim };
      }
      case 'sym': {
        const info = this.resolve(n.name);
        if (!info) throw new ExpressionError('unknown-name', `unknown dimension '${n.name}'`, n.at);
        let j = this.localOf.get(n.name);
        if (j === undefined) {
          j = this.vars.length;
          this.localOf.set(n.name, j);
          this.vars.push(info.index);
          this.names.push(n.name);
        }
        const dim = info.quantity === 'length' ? LENGTH : info.quantity === 'angle' ? ANGLE : PLAIN;
        return { node: { t: 'var', j, gi: info.index, at: n.at }, dim };
      }
      case 'neg': {
        const a = this.bind(n.a);
        return {
          node: isConst(a.node) ? { t: 'num', v: -a.node.v } : { t: 'neg', a: a.node },
          dim: a.dim,
        };
      }
      case 'bin': {
        const a = this.bind(n.a);
        const b = this.bind(n.b);
        let dim: UnitDim | null;
        switch (n.op) {
          case '+':
          case '-':
            if (!compatible(a.dim, b.dim)) {
              throw new ExpressionError(
                'unit-mismatch',
                `unit mismatch: ${describe(a.dim)} ${n.op} ${describe(b.dim)}`,
                n.at,
              );
            }
            dim = merge(a.dim, b.dim);
            break;
          case '*':
            dim = !a.dim ? b.dim : !b.dim ? a.dim : { L: a.dim.L + b.dim.L, A: a.dim.A + b.dim.A };
            break;
          case '/':
            if (isConst(b.node) && b.node.v === 0)
              throw new ExpressionError('division-by-zero', 'division by zero', n.at);
            dim = !b.dim ? a.dim : { L: (a.dim?.L ?? 0) - b.dim.L, A: (a.dim?.A ?? 0) - b.dim.A };
            if (!a.dim && !b.dim) dim = null;
            break;
          case '^': {
            if (b.dim && b.dim.L !== 0) {
              throw new ExpressionError(
                'unit-mismatch',
                `unit mismatch: an exponent must be a number, not ${describe(b.dim)}`,
                n.at,
              );
            }
            const plain = !a.dim || (a.dim.L === 0 && a.dim.A === 0);
            if (plain) dim = a.dim;
            else if (isConst(b.node)) dim = { L: a.dim!.L * b.node.v, A: a.dim!.A * b.node.v };
            else
              throw new ExpressionError(
                'unit-mismatch',
                `unit mismatch: ${describe(a.dim)} can only be raised to a constant power`,
                n.at,
              );
            break;
          }
        }
        const node: BNode = { t: 'bin', op: n.op, a: a.node, b: b.node, at: n.at };
        if (isConst(a.node) && isConst(b.node)) {
          const v = evalBin(n.op, a.node.v, b.node.v);
          if (!Number.isFinite(v))
            throw new ExpressionError('syntax', 'this constant is not a finite number', n.at);
          return { node: { t: 'num', v }, dim };
        }
        return { node, dim };
      }
      case 'call': {
        const args = n.args.map((x) => this.bind(x));
        let dim: UnitDim | null;
        switch (n.fn) {
          case 'sqrt':
            dim = args[0].dim ? { L: args[0].dim.L / 2, A: args[0].dim.A / 2 } : null;
            break;
          case 'abs':
            dim = args[0].dim;
            break;
          case 'min':
          case 'max':
          case 'hypot':
            dim = args[0].dim;
            for (let i = 1; i < args.length; i++) {
              if (!compatible(dim, args[i].dim)) {
                throw new ExpressionError(
                  'unit-mismatch',
                  `unit mismatch in ${n.fn}: ${describe(dim)} and ${describe(args[i].dim)}`,
                  n.at,
                );
              }
              dim = merge(dim, args[i].dim);
            }
            break;
          case 'sin':
          case 'cos':
          case 'tan':
            if (args[0].dim && args[0].dim.L !== 0) {
              throw new ExpressionError(
                'unit-mismatch',
                `unit mismatch: ${n.fn} takes an angle (degrees), not ${describe(args[0].dim)}`,
                n.at,
              );
            }
            dim = { L: 0, A: 0 };
            break;
          case 'asin':
          case 'acos':
          case 'atan':
            if (args[0].dim && (args[0].dim.L !== 0 || args[0].dim.A !== 0)) {
              throw new ExpressionError(
                'unit-mismatch',
                `unit mismatch: ${n.fn} takes a plain number, not ${describe(args[0].dim)}`,
                n.at,
              );
            }
            dim = { L: 0, A: 1 };
            break;
          case 'atan2':
            if (!compatible(args[0].dim, args[1].dim)) {
              throw new ExpressionError(
                'unit-mismatch',
                `unit mismatch in atan2: ${describe(args[0].dim)} and ${describe(args[1].dim)}`,
                n.at,
              );
            }
            dim = { L: 0, A: 1 };
            break;
        }
        const argNodes = args.map((a) => a.node);
        if (argNodes.every(isConst)) {
          const v = applyFn(
            n.fn,
            argNodes.map((a) => (a as { v: number }).v),
          );
          if (!Number.isFinite(v))
            throw new ExpressionError(
              'syntax',
              `${n.fn} of these constants is not a finite number`,
              n.at,
            );
          return { node: { t: 'num', v }, dim };
        }
        return { node: { t: 'call', fn: n.fn, args: argNodes, at: n.at }, dim };
      }
    }
  }
}

/**
 * A relation bound to a model. Affine relations (most chains) are evaluated from their
 * coefficients; closures for the others are compiled on first use, so binding stays cheap.
 */
class BoundRelation implements CompiledRelation {
  readonly vars: Int32Array;
  readonly affine: { c: number; a: Float64Array } | null;
  private value: Ev | null = null;
  private mag: Ev | null = null;
  private grad: GradNode | null = null;
  constructor(
    readonly text: string,
    private readonly root: BNode,
    vars: number[],
    readonly names: string[],
  ) {
    this.vars = Int32Array.from(vars);
    const a = new Float64Array(vars.length);
    const c = accumulateAffine(root, 1, a);
    this.affine = c === null ? null : { c, a };
  }

  residual(x: Float64Array): number {
    const af = this.affine;
    if (af) {
      let s = af.c;
      for (let j = 0; j < this.vars.length; j++) s += af.a[j] * x[this.vars[j]];
      return s;
    }
    this.value ??= compileValue(this.root);
    return this.value(x);
  }

  scale(x: Float64Array): number {
    const af = this.affine;
    if (af) {
      let s = Math.abs(af.c);
      for (let j = 0; j < this.vars.length; j++) s += Math.abs(af.a[j] * x[this.vars[j]]);
      return s;
    }
    this.mag ??= compileMagnitude(this.root);
    return this.mag(x);
  }

  gradient(x: Float64Array, g: Float64Array): number {
    const af = this.affine;
    if (af) {
      g.set(af.a);
      return this.residual(x);
    }
    this.grad ??= compileGradient(this.root, this.vars.length);
    const v = this.grad.ev(x);
    if (this.grad.g) g.set(this.grad.g);
    else g.fill(0);
    return v;
  }

  degreeIn(inMask: (globalIndex: number) => boolean): 0 | 1 | 2 {
    return degreeIn(this.root, inMask);
  }

  diagnose(x: Float64Array) {
    return diagnose(this.root, x, this.names);
  }
}

/**
 * Binds a parsed relation to a model's dimensions: resolves names, checks units, folds
 * constants and compiles closures. Throws ExpressionError (unknown name, unit mismatch,
 * division by a constant zero).
 *
 * @example
 * const r = bindRelation(parseRelation('a = b + 1/8 in'), (n) => ({ index: n === 'a' ? 0 : 1, quantity: 'length' }), 'mm');
 * r.residual(Float64Array.of(5.175, 2)) // 0 (to rounding)
 */
export function bindRelation(
  parsed: ParsedRelation,
  resolve: (name: string) => SymbolInfo | undefined,
  unit: ModelUnit,
): CompiledRelation {
  const binder = new Binder(resolve, unit);
  const L = binder.bind(parsed.lhs);
  const R = binder.bind(parsed.rhs);
  if (!compatible(L.dim, R.dim)) {
    throw new ExpressionError(
      'unit-mismatch',
      `unit mismatch: the left side is ${describe(L.dim)}, the right side ${describe(R.dim)}`,
      parsed.eqAt,
    );
  }
  const root: BNode = { t: 'bin', op: '-', a: L.node, b: R.node, at: parsed.eqAt };
  return new BoundRelation(parsed.text, root, binder.vars, binder.names);
}

function evalBin(op: '+' | '-' | '*' | '/' | '^', a: number, b: number): number {
  switch (op) {
    case '+':
      return a + b;
    case '-':
      return a - b;
    case '*':
      return a * b;
    case '/':
      return a / b;
    case '^':
      return a ** b;
  }
}

/**
 * Adds f·node into the affine form (coefficients a, constant returned); null when the node is
 * not affine. Constant subtrees were folded while binding, so any non-number node holds a
 * variable: a product is affine only with a number on one side, a quotient with a number below.
 */
function accumulateAffine(n: BNode, f: number, a: Float64Array): number | null {
  switch (n.t) {
    case 'num':
      return f * n.v;
    case 'var':
      a[n.j] += f;
      return 0;
    case 'neg':
      return accumulateAffine(n.a, -f, a);
    case 'bin': {
      let x: number | null;
      let y: number | null;
      switch (n.op) {
        case '+':
        case '-':
          x = accumulateAffine(n.a, f, a);
          if (x === null) return null;
          y = accumulateAffine(n.b, n.op === '+' ? f : -f, a);
          return y === null ? null : x + y;
        case '*':
          if (n.a.t === 'num') return accumulateAffine(n.b, f * n.a.v, a);
          if (n.b.t === 'num') return accumulateAffine(n.a, f * n.b.v, a);
          return null;
        case '/':
          return n.b.t === 'num' ? accumulateAffine(n.a, f / n.b.v, a) : null;
        default:
          return null;
      }
    }
    case 'call':
      return null;
  }
}

function degreeIn(n: BNode, inMask: (gi: number) => boolean): 0 | 1 | 2 {
  switch (n.t) {
    case 'num':
      return 0;
    case 'var':
      return inMask(n.gi) ? 1 : 0;
    case 'neg':
      return degreeIn(n.a, inMask);
    case 'bin': {
      const a = degreeIn(n.a, inMask);
      if (a === 2) return 2;
      const b = degreeIn(n.b, inMask);
      switch (n.op) {
        case '+':
        case '-':
          return Math.max(a, b) as 0 | 1 | 2;
        case '*':
          return a + b > 1 ? 2 : ((a + b) as 0 | 1);
        case '/':
          return b === 0 ? a : 2;
        case '^':
          return a === 0 && b === 0 ? 0 : 2;
      }
      return 2;
    }
    case 'call':
      return n.args.every((x) => degreeIn(x, inMask) === 0) ? 0 : 2;
  }
}

type Ev = (x: Float64Array) => number;

function compileValue(n: BNode): Ev {
  switch (n.t) {
    case 'num': {
      const v = n.v;
      return () => v;
    }
    case 'var': {
      const i = n.gi;
      return (x) => x[i];
    }
    case 'neg': {
      const a = compileValue(n.a);
      return (x) => -a(x);
    }
    case 'bin': {
      const a = compileValue(n.a);
      const b = compileValue(n.b);
      switch (n.op) {
        case '+':
          return (x) => a(x) + b(x);
        case '-':
          return (x) => a(x) - b(x);
        case '*':
          return (x) => a(x) * b(x);
        case '/':
          return (x) => a(x) / b(x);
        case '^':
          return (x) => a(x) ** b(x);
      }
      throw new Error('unreachable');
    }
    case 'call': {
      const args = n.args.map(compileValue);
      const fn = n.fn;
      if (args.length === 1) {
        const a = args[0];
        switch (fn) {
          case 'sqrt':
            return (x) => Math.sqrt(a(x));
          case 'abs':
            return (x) => Math.abs(a(x));
          case 'sin':
            return (x) => sinDeg(a(x));
          case 'cos':
            return (x) => cosDeg(a(x));
          default:
            return (x) => applyFn(fn, [a(x)]);
        }
      }
      return (x) =>
        applyFn(
          fn,
          args.map((f) => f(x)),
        );
    }
  }
}

/** Sum of the magnitudes of the additive terms: the scale a residual is judged against. */
function compileMagnitude(n: BNode): Ev {
  if (n.t === 'bin' && (n.op === '+' || n.op === '-')) {
    const a = compileMagnitude(n.a);
    const b = compileMagnitude(n.b);
    return (x) => a(x) + b(x);
  }
  if (n.t === 'neg') return compileMagnitude(n.a);
  const v = compileValue(n);
  return (x) => Math.abs(v(x));
}

/** Forward-mode node: ev computes the value and writes the local gradient into g (null: constant). */
interface GradNode {
  ev: Ev;
  g: Float64Array | null;
}

function compileGradient(n: BNode, k: number): GradNode {
  switch (n.t) {
    case 'num': {
      const v = n.v;
      return { ev: () => v, g: null };
    }
    case 'var': {
      const i = n.gi;
      const g = new Float64Array(k);
      g[n.j] = 1;
      return { ev: (x) => x[i], g };
    }
    case 'neg': {
      const A = compileGradient(n.a, k);
      const g = new Float64Array(k);
      const ga = A.g!;
      return {
        ev: (x) => {
          const v = A.ev(x);
          for (let j = 0; j < k; j++) g[j] = -ga[j];
          return -v;
        },
        g,
      };
    }
    case 'bin': {
      const A = compileGradient(n.a, k);
      const B = compileGradient(n.b, k);
      const g = new Float64Array(k);
      const ga = A.g ?? new Float64Array(k);
      const gb = B.g ?? new Float64Array(k);
      let ev: Ev;
      switch (n.op) {
        case '+':
          ev = (x) => {
            const a = A.ev(x);
            const b = B.ev(x);
            for (let j = 0; j < k; j++) g[j] = ga[j] + gb[j];
            return a + b;
          };
          break;
        case '-':
          ev = (x) => {
            const a = A.ev(x);
            const b = B.ev(x);
            for (let j = 0; j < k; j++) g[j] = ga[j] - gb[j];
            return a - b;
          };
          break;
        case '*':
          ev = (x) => {
            const a = A.ev(x);
            const b = B.ev(x);
            for (let j = 0; j < k; j++) g[j] = ga[j] * b + a * gb[j];
            return a * b;
          };
          break;
        case '/':
          ev = (x) => {
            const a = A.ev(x);
            const b = B.ev(x);
            const q = a / b;
            for (let j = 0; j < k; j++) g[j] = (ga[j] - q * gb[j]) / b;
            return q;
          };
          break;
        case '^': {
          const constExp = B.g === null;
          ev = (x) => {
            const a = A.ev(x);
            const b = B.ev(x);
            const p = a ** b;
            const da = b === 0 ? 0 : b * a ** (b - 1);
            const db = constExp ? 0 : a > 0 ? p * Math.log(a) : 0;
            for (let j = 0; j < k; j++) g[j] = da * ga[j] + db * gb[j];
            return p;
          };
          break;
        }
      }
      return { ev, g };
    }
    case 'call': {
      const A = n.args.map((a) => compileGradient(a, k));
      const gs = A.map((a) => a.g ?? new Float64Array(k));
      const g = new Float64Array(k);
      const vals = new Float64Array(A.length);
      const fn = n.fn;
      const chain1 = (d: number, ga: Float64Array) => {
        for (let j = 0; j < k; j++) g[j] = d * ga[j];
      };
      const ev: Ev = (x) => {
        for (let i = 0; i < A.length; i++) vals[i] = A[i].ev(x);
        const u = vals[0];
        switch (fn) {
          case 'sqrt': {
            const s = Math.sqrt(u);
            chain1(s === 0 ? 0 : 0.5 / s, gs[0]);
            return s;
          }
          case 'abs':
            chain1(u > 0 ? 1 : u < 0 ? -1 : 0, gs[0]);
            return Math.abs(u);
          case 'sin':
            chain1(cosDeg(u) * D2R, gs[0]);
            return sinDeg(u);
          case 'cos':
            chain1(-sinDeg(u) * D2R, gs[0]);
            return cosDeg(u);
          case 'tan': {
            const c = cosDeg(u);
            chain1(D2R / (c * c), gs[0]);
            return tanDeg(u);
          }
          case 'asin':
            chain1(R2D / Math.sqrt(1 - u * u), gs[0]);
            return Math.asin(u) * R2D;
          case 'acos':
            chain1(-R2D / Math.sqrt(1 - u * u), gs[0]);
            return Math.acos(u) * R2D;
          case 'atan':
            chain1(R2D / (1 + u * u), gs[0]);
            return Math.atan(u) * R2D;
          case 'atan2': {
            const y = vals[0];
            const xx = vals[1];
            const d = xx * xx + y * y;
            for (let j = 0; j < k; j++)
              g[j] = d === 0 ? 0 : (R2D * (xx * gs[0][j] - y * gs[1][j])) / d;
            return Math.atan2(y, xx) * R2D;
          }
          case 'hypot': {
            let s = 0;
            for (let i = 0; i < vals.length; i++) s += vals[i] * vals[i];
            const h = Math.sqrt(s);
            g.fill(0);
            if (h > 0)
              for (let i = 0; i < vals.length; i++)
                for (let j = 0; j < k; j++) g[j] += (vals[i] / h) * gs[i][j];
            return h;
          }
          case 'min':
          case 'max': {
            let best = 0;
            for (let i = 1; i < vals.length; i++) {
              if (fn === 'min' ? vals[i] < vals[best] : vals[i] > vals[best]) best = i;
            }
            g.set(gs[best]);
            return vals[best];
          }
        }
      };
      return { ev, g };
    }
  }
}

/** Slow, careful evaluation that names the first operation that gives no finite number. */
function diagnose(
  root: BNode,
  x: Float64Array,
  names: string[],
): { code: ExpressionErrorCode | 'not-finite'; message: string; at?: number } | null {
  class Stop {
    constructor(
      readonly code: ExpressionErrorCode | 'not-finite',
      readonly message: string,
      readonly at?: number,
    ) {}
  }
  const ev = (n: BNode): number => {
    switch (n.t) {
      case 'num':
        return n.v;
      case 'var': {
        const v = x[n.gi];
        if (!Number.isFinite(v)) throw new Stop('not-finite', `'${names[n.j]}' has no value`, n.at);
        return v;
      }
      case 'neg':
        return -ev(n.a);
      case 'bin': {
        const a = ev(n.a);
        const b = ev(n.b);
        if (n.op === '/' && b === 0) throw new Stop('division-by-zero', 'division by zero', n.at);
        const v = evalBin(n.op, a, b);
        if (!Number.isFinite(v))
          throw new Stop('not-finite', `'${n.op}' gives no finite number here`, n.at);
        return v;
      }
      case 'call': {
        const v = applyFn(n.fn, n.args.map(ev));
        if (!Number.isFinite(v)) {
          const why =
            n.fn === 'sqrt'
              ? 'square root of a negative number'
              : n.fn === 'tan'
                ? 'tan of 90°'
                : `${n.fn} is out of its range here`;
          throw new Stop('not-finite', why, n.at);
        }
        return v;
      }
    }
  };
  try {
    ev(root);
    return null;
  } catch (e) {
    if (e instanceof Stop) return { code: e.code, message: e.message, at: e.at };
    throw e;
  }
}
