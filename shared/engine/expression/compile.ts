/**
 * Stage 4, compile: a bound relation as something the solver calls. Affine relations (most
 * chains) keep their coefficients; the others compile on first use to plain closures for the
 * value and the magnitude of the terms, and to forward-mode gradients (`gradient.ts`).
 */
import { applyFn, cosDeg, sinDeg } from './arithmetic';
import type { BNode } from './bind';
import { diagnose, type Diagnosis } from './diagnose';
import { compileGradient, type GradNode } from './gradient';

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
  diagnose(x: Float64Array): Diagnosis | null;
}

/**
 * A relation bound to a model. Affine relations (most chains) are evaluated from their
 * coefficients; closures for the others are compiled on first use, so binding stays cheap.
 */
export class BoundRelation implements CompiledRelation {
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
      for (let j = 0; j < this.vars.length; j++) s += af.a[j]! * x[this.vars[j]!]!;
      return s;
    }
    this.value ??= compileValue(this.root);
    return this.value(x);
  }

  scale(x: Float64Array): number {
    const af = this.affine;
    if (af) {
      let s = Math.abs(af.c);
      for (let j = 0; j < this.vars.length; j++) s += Math.abs(af.a[j]! * x[this.vars[j]!]!);
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
 * Adds f·node into the affine form (coefficients a, constant returned); null when the node is
 * not affine. Constant subtrees were folded while binding, so any non-number node holds a
 * variable: a product is affine only with a number on one side, a quotient with a number below.
 */
function accumulateAffine(n: BNode, f: number, a: Float64Array): number | null {
  switch (n.t) {
    case 'num':
      return f * n.v;
    case 'var':
      // a has one entry per local variable: n.j is one of them.
      a[n.j]! += f;
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

export type Ev = (x: Float64Array) => number;

function compileValue(n: BNode): Ev {
  switch (n.t) {
    case 'num': {
      const v = n.v;
      return () => v;
    }
    case 'var': {
      const i = n.gi;
      return (x) => x[i]!;
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
      const [a] = args;
      if (a && args.length === 1) {
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
