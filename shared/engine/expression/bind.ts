/**
 * Stage 3, bind: a parsed relation against a model's dimensions. Names become indices in the
 * solver's value array, unit literals numbers in the model unit, lengths and angles are checked
 * against each other, and constant subtrees are folded.
 */
import { MM_PER_IN, type ModelUnit } from '../length';
import { TOLERANCES } from '../numeric';
import { applyFn, evalBin } from './arithmetic';
import { BoundRelation, type CompiledRelation } from './compile';
import { ExpressionError } from './error';
import type { ExprNode, FunctionName, ParsedRelation, UnitSymbol } from './vocabulary';

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

/** The bound tree: names resolved to variables, constants folded. */
export type BNode =
  | { t: 'num'; v: number }
  | { t: 'var'; j: number; gi: number; at: number }
  | { t: 'neg'; a: BNode }
  | { t: 'bin'; op: '+' | '-' | '*' | '/' | '^'; a: BNode; b: BNode; at: number }
  | { t: 'call'; fn: FunctionName; args: BNode[]; at: number };

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
  const tol = TOLERANCES.unitPower;
  return Math.abs(x.L - y.L) < tol && (Math.abs(x.A - y.A) < tol || x.A === 0 || y.A === 0);
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
        // parse.ts checked the count against FUNCTIONS: every function has a first argument.
        const [first] = args;
        if (!first) throw new ExpressionError('syntax', `${n.fn} takes an argument`, n.at);
        let dim: UnitDim | null;
        switch (n.fn) {
          case 'sqrt':
            dim = first.dim ? { L: first.dim.L / 2, A: first.dim.A / 2 } : null;
            break;
          case 'abs':
            dim = first.dim;
            break;
          case 'min':
          case 'max':
          case 'hypot':
            dim = first.dim;
            for (const arg of args.slice(1)) {
              if (!compatible(dim, arg.dim)) {
                throw new ExpressionError(
                  'unit-mismatch',
                  `unit mismatch in ${n.fn}: ${describe(dim)} and ${describe(arg.dim)}`,
                  n.at,
                );
              }
              dim = merge(dim, arg.dim);
            }
            break;
          case 'sin':
          case 'cos':
          case 'tan':
            if (first.dim && first.dim.L !== 0) {
              throw new ExpressionError(
                'unit-mismatch',
                `unit mismatch: ${n.fn} takes an angle (degrees), not ${describe(first.dim)}`,
                n.at,
              );
            }
            dim = { L: 0, A: 0 };
            break;
          case 'asin':
          case 'acos':
          case 'atan':
            if (first.dim && (first.dim.L !== 0 || first.dim.A !== 0)) {
              throw new ExpressionError(
                'unit-mismatch',
                `unit mismatch: ${n.fn} takes a plain number, not ${describe(first.dim)}`,
                n.at,
              );
            }
            dim = { L: 0, A: 1 };
            break;
          case 'atan2': {
            const second = args[1];
            if (!second) throw new ExpressionError('syntax', 'atan2 takes 2 arguments', n.at);
            if (!compatible(first.dim, second.dim)) {
              throw new ExpressionError(
                'unit-mismatch',
                `unit mismatch in atan2: ${describe(first.dim)} and ${describe(second.dim)}`,
                n.at,
              );
            }
            dim = { L: 0, A: 1 };
            break;
          }
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
