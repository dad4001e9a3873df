/**
 * Stage 6, diagnose: when a relation gives no finite number at a point, which operation of it
 * failed and where (the offset of its token), in words for the builder.
 */
import { applyFn, evalBin } from './arithmetic';
import type { BNode } from './bind';
import type { ExpressionErrorCode } from './error';

/** Why a relation gives no finite number at a point. */
export interface Diagnosis {
  code: ExpressionErrorCode | 'not-finite';
  message: string;
  at?: number;
}

/** Slow, careful evaluation that names the first operation that gives no finite number. */
export function diagnose(root: BNode, x: Float64Array, names: string[]): Diagnosis | null {
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
        if (v === undefined || !Number.isFinite(v))
          throw new Stop('not-finite', `'${names[n.j]}' has no value`, n.at);
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
