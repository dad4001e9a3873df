/**
 * The arithmetic every later stage shares: the allowed functions on numbers, trigonometry in
 * degrees (exact at multiples of 30°), and the binary operators.
 */
import type { FunctionName } from './vocabulary';

export const D2R = Math.PI / 180;
export const R2D = 180 / Math.PI;

/** Sine of degrees, exact at multiples of 30° (so sin 30° is 0.5, cos 90° is 0). */
export function sinDeg(d: number): number {
  const r = ((d % 360) + 360) % 360;
  // r is one of 0, 30, …, 330 here: r / 30 indexes one of the table's twelve entries.
  if (r % 30 === 0) return SIN30[r / 30]!;
  return Math.sin(d * D2R);
}
/** Cosine of degrees, exact at multiples of 30°. */
export function cosDeg(d: number): number {
  return sinDeg(d + 90);
}
const H = Math.sqrt(3) / 2;
const SIN30 = [0, 0.5, H, 1, H, 0.5, 0, -0.5, -H, -1, -H, -0.5];

export function tanDeg(d: number): number {
  const r = ((d % 180) + 180) % 180;
  if (r === 90) return Infinity;
  if (r === 0) return 0;
  if (r === 45) return 1;
  if (r === 135) return -1;
  return Math.tan(d * D2R);
}

export function applyFn(fn: FunctionName, v: number[]): number {
  // parse.ts checked the count against FUNCTIONS: every function has a first argument, atan2 a
  // second.
  const a = v[0]!;
  switch (fn) {
    case 'sqrt':
      return Math.sqrt(a);
    case 'abs':
      return Math.abs(a);
    // v has at most EXPRESSION_LIMITS.arguments entries (checked when read): the spreads below
    // stay far inside the engine's argument limit.
    case 'min':
      return Math.min(...v);
    case 'max':
      return Math.max(...v);
    case 'hypot':
      return Math.hypot(...v);
    case 'sin':
      return sinDeg(a);
    case 'cos':
      return cosDeg(a);
    case 'tan':
      return tanDeg(a);
    case 'asin':
      return Math.asin(a) * R2D;
    case 'acos':
      return Math.acos(a) * R2D;
    case 'atan':
      return Math.atan(a) * R2D;
    case 'atan2':
      return Math.atan2(a, v[1]!) * R2D;
  }
}

export function evalBin(op: '+' | '-' | '*' | '/' | '^', a: number, b: number): number {
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
