/**
 * Stage 5, gradient: forward-mode derivatives. Each node of the bound tree becomes a closure
 * that computes its value and writes its gradient with respect to the relation's variables.
 */
import { D2R, R2D, cosDeg, sinDeg, tanDeg } from './arithmetic';
import type { BNode } from './bind';
import type { Ev } from './compile';

/** Forward-mode node: ev computes the value and writes the local gradient into g (null: constant). */
export interface GradNode {
  ev: Ev;
  g: Float64Array | null;
}

export function compileGradient(n: BNode, k: number): GradNode {
  switch (n.t) {
    case 'num': {
      const v = n.v;
      return { ev: () => v, g: null };
    }
    case 'var': {
      const i = n.gi;
      const g = new Float64Array(k);
      g[n.j] = 1;
      return { ev: (x) => x[i]!, g };
    }
    case 'neg': {
      const A = compileGradient(n.a, k);
      const g = new Float64Array(k);
      const ga = A.g!;
      return {
        ev: (x) => {
          const v = A.ev(x);
          for (let j = 0; j < k; j++) g[j] = -ga[j]!;
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
            for (let j = 0; j < k; j++) g[j] = ga[j]! + gb[j]!;
            return a + b;
          };
          break;
        case '-':
          ev = (x) => {
            const a = A.ev(x);
            const b = B.ev(x);
            for (let j = 0; j < k; j++) g[j] = ga[j]! - gb[j]!;
            return a - b;
          };
          break;
        case '*':
          ev = (x) => {
            const a = A.ev(x);
            const b = B.ev(x);
            for (let j = 0; j < k; j++) g[j] = ga[j]! * b + a * gb[j]!;
            return a * b;
          };
          break;
        case '/':
          ev = (x) => {
            const a = A.ev(x);
            const b = B.ev(x);
            const q = a / b;
            for (let j = 0; j < k; j++) g[j] = (ga[j]! - q * gb[j]!) / b;
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
            for (let j = 0; j < k; j++) g[j] = da * ga[j]! + db * gb[j]!;
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
        for (let j = 0; j < k; j++) g[j] = d * ga[j]!;
      };
      // parse.ts checked the count against FUNCTIONS: every function has a first argument, atan2
      // a second.
      const g0 = gs[0]!;
      const ev: Ev = (x) => {
        for (let i = 0; i < A.length; i++) vals[i] = A[i]!.ev(x);
        const u = vals[0]!;
        switch (fn) {
          case 'sqrt': {
            const s = Math.sqrt(u);
            chain1(s === 0 ? 0 : 0.5 / s, g0);
            return s;
          }
          case 'abs':
            chain1(u > 0 ? 1 : u < 0 ? -1 : 0, g0);
            return Math.abs(u);
          case 'sin':
            chain1(cosDeg(u) * D2R, g0);
            return sinDeg(u);
          case 'cos':
            chain1(-sinDeg(u) * D2R, g0);
            return cosDeg(u);
          case 'tan': {
            const c = cosDeg(u);
            chain1(D2R / (c * c), g0);
            return tanDeg(u);
          }
          case 'asin':
            chain1(R2D / Math.sqrt(1 - u * u), g0);
            return Math.asin(u) * R2D;
          case 'acos':
            chain1(-R2D / Math.sqrt(1 - u * u), g0);
            return Math.acos(u) * R2D;
          case 'atan':
            chain1(R2D / (1 + u * u), g0);
            return Math.atan(u) * R2D;
          case 'atan2': {
            const y = u;
            const xx = vals[1]!;
            const g1 = gs[1]!;
            const d = xx * xx + y * y;
            for (let j = 0; j < k; j++) g[j] = d === 0 ? 0 : (R2D * (xx * g0[j]! - y * g1[j]!)) / d;
            return Math.atan2(y, xx) * R2D;
          }
          case 'hypot': {
            let s = 0;
            for (let i = 0; i < vals.length; i++) s += vals[i]! * vals[i]!;
            const h = Math.sqrt(s);
            g.fill(0);
            if (h > 0)
              for (let i = 0; i < vals.length; i++)
                for (let j = 0; j < k; j++) g[j]! += (vals[i]! / h) * gs[i]![j]!;
            return h;
          }
          case 'min':
          case 'max': {
            let best = 0;
            for (let i = 1; i < vals.length; i++) {
              if (fn === 'min' ? vals[i]! < vals[best]! : vals[i]! > vals[best]!) best = i;
            }
            g.set(gs[best]!);
            return vals[best]!;
          }
        }
      };
      return { ev, g };
    }
  }
}
