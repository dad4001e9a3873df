/**
 * Stage 2, parse: one mathjs parse of the prepared text, then a walk of its tree against the
 * allow-list into a checked `ExprNode`, each node given the offset of its token (tokens and
 * token-bearing nodes are aligned in source order). Parsed relations are cached by text.
 */
import { create, parseDependencies, type MathNode } from 'mathjs';
import { ExpressionError } from './error';
import { lex, type Token } from './lex';
import { EXPRESSION_LIMITS, checkLength, thousands } from './limits';
import {
  DEG_MARK,
  FUNCTIONS,
  INCH_MARK,
  QUALIFIER_MARK,
  UNIT_SYMBOLS,
  shown,
  type ExprNode,
  type FunctionName,
  type ParsedRelation,
} from './vocabulary';

// One private instance holding only the parser; never the global mathjs instance. (mathjs
// declares its dependency sets as entries of one record, so their types allow a missing one.)
const math = create({ parseDependencies: parseDependencies! });

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
        const unit = Object.hasOwn(UNIT_SYMBOLS, name) ? UNIT_SYMBOLS[name] : undefined;
        if (unit) return { t: 'unit', unit, at };
        if (name === 'pi') return { t: 'num', v: Math.PI, at };
        if (Object.hasOwn(FUNCTIONS, name)) {
          throw new ExpressionError('forbidden', `${name} is a function: write ${name}(…)`, at);
        }
        return { t: 'sym', name: name.replace(QUALIFIER_MARK, '.'), at };
      }
      case 'OperatorNode': {
        const op = n as unknown as { fn: string; op: string; args: MathNode[]; implicit?: boolean };
        const [left, right, ...more] = op.args;
        if ((op.fn === 'unaryMinus' || op.fn === 'unaryPlus') && left && !right) {
          const at = this.take('op', op.op);
          const a = this.walk(left, depth + 1);
          return op.fn === 'unaryMinus' ? { t: 'neg', a, at } : a;
        }
        const sym = OPS[op.fn];
        if (!sym || !left || !right || more.length > 0) {
          throw new ExpressionError('forbidden', `operator '${op.op}' is not allowed`, this.here());
        }
        const a = this.walk(left, depth + 1);
        const at = op.implicit ? this.here() : this.take('op', op.op);
        const b = this.walk(right, depth + 1);
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
 * @example parseRelation('x = a[1]') // throws ExpressionError { code: 'forbidden', at: 5 }
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
  const [eq, secondEq] = tokens.filter((t) => t.kind === 'eq');
  if (!eq)
    throw new ExpressionError('syntax', "a relation needs '=' between its two sides", text.length);
  if (secondEq) throw new ExpressionError('forbidden', "a relation has a single '='", secondEq.at);
  const eqAt = eq.at;
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
  const [left, right, ...more] = root.args ?? [];
  if (root.type !== 'OperatorNode' || root.fn !== 'smaller' || !left || !right || more.length > 0) {
    throw new ExpressionError('syntax', 'a relation is one expression = another', eqAt);
  }
  const reader = new SideReader(tokens, 0);
  const lhs = reader.walk(left);
  const rhs = reader.walk(right);
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
