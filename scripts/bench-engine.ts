/**
 * Engine benchmark: solve + stack-up time for generated models of 100, 1,000 and 10,000
 * dimensions, the growth from 1,000 to 10,000, the speed against a dense mathjs `lusolve` of
 * the same 300-unknown linear system, and the re-solve time of a 200-dimension model (the
 * per-keystroke case in the browser).
 *
 *   npm run -s bench:engine
 *
 * The last line is one JSON object: ms100, ms1000, ms10000, growth, denseRatio300, resolve200Ms.
 * Sizes 100–10,000 are timed cold (the relation parse cache is cleared before every run), so
 * parsing every relation with mathjs is included. The re-solve is timed warm, as in the
 * browser: one value changed, the relations' parses reused.
 */
import { lusolve } from 'mathjs';
import {
  clearRelationCache,
  prepareModel,
  solveModel,
  solvePrepared,
  modelSchema,
} from '@shared/engine';

type Dim = Record<string, unknown>;

/**
 * A model of `groups` × 10 dimensions. Each group has a chain (s), a coupled 2×2 linear block
 * (u, v), a non-linear block (hx from a hypotenuse), and a redundant check; groups are chained
 * ten at a time through s, like the parts of a drawing set that reference each other.
 */
function generate(groups: number) {
  const dimensions: Dim[] = [];
  const relations: Array<{ id: string; expr: string }> = [];
  for (let g = 0; g < groups; g++) {
    const v = (x: number) => (x + (g % 7) * 0.125).toFixed(3);
    dimensions.push(
      { name: `ov${g}`, kind: 'stated', value: v(6) },
      { name: `a${g}`, kind: 'stated', value: '1.000', tol: '0.002' },
      { name: `b${g}`, kind: 'stated', value: '1 1/2' },
      { name: `p${g}`, kind: 'scaled', value: v(2) },
      { name: `q${g}`, kind: 'stated', value: '0.50' },
      { name: `rad${g}`, kind: 'stated', value: '2.000', tol: '0.001' },
      { name: `s${g}`, kind: 'derived' },
      { name: `u${g}`, kind: 'derived' },
      { name: `w${g}`, kind: 'derived' },
      { name: `hx${g}`, kind: 'derived' },
    );
    const link = g % 10 === 0 ? '' : ` + 0.01 * s${g - 1}`;
    relations.push(
      { id: `chain${g}`, expr: `ov${g} = a${g} + s${g} + b${g}${link}` },
      { id: `sum${g}`, expr: `u${g} + w${g} = p${g} + s${g}` },
      { id: `diff${g}`, expr: `u${g} - 2 * w${g} = q${g}` },
      { id: `hyp${g}`, expr: `hypot(hx${g}, a${g}) = rad${g}` },
      { id: `check${g}`, expr: `ov${g} - b${g} = s${g} + a${g}${link}` },
    );
  }
  return { format: 'fairsheet.model', version: 1, units: 'in', dimensions, relations };
}

function median(xs: number[]): number {
  const s = [...xs].sort((a, b) => a - b);
  return s.length % 2 ? s[(s.length - 1) / 2]! : (s[s.length / 2 - 1]! + s[s.length / 2]!) / 2;
}

function timeCold(model: unknown, runs: number): number {
  const times: number[] = [];
  for (let i = 0; i <= runs; i++) {
    clearRelationCache();
    const t = performance.now();
    const r = solveModel(model);
    const dt = performance.now() - t;
    if (r.status !== 'solved')
      throw new Error(
        `benchmark model did not solve: ${r.status} ${JSON.stringify(r.errors.slice(0, 2))}`,
      );
    if (i > 0) times.push(dt); // the first run warms the JIT
  }
  return median(times);
}

const round = (x: number, d = 3) => Number(x.toFixed(d));

// Sizes.
const ms100 = timeCold(generate(10), 31);
const ms1000 = timeCold(generate(100), 21);
const ms10000 = timeCold(generate(1000), 7);
const growth = ms10000 / ms1000;
console.log(
  `solve + stack-up, cold: 100 dims ${ms100.toFixed(2)} ms, 1,000 dims ${ms1000.toFixed(2)} ms, 10,000 dims ${ms10000.toFixed(2)} ms`,
);
console.log(`growth 1,000 → 10,000: ×${growth.toFixed(2)} (linear would be ×10)`);

// The same 300-unknown linear system: x_i + 0.3·x_(i+1) − 0.2·x_(i−1) = g_i, cyclic, so every
// unknown is coupled to every other (one strongly connected block of 300).
const n = 300;
const gVals = Array.from({ length: n }, (_, i) => 1 + (i % 5) * 0.25);
const sys = {
  format: 'fairsheet.model',
  version: 1,
  units: 'mm',
  dimensions: [
    ...gVals.map((v, i) => ({ name: `g${i}`, kind: 'stated', value: v, tol: 0.01 })),
    ...gVals.map((_, i) => ({ name: `x${i}`, kind: 'derived' })),
  ],
  relations: gVals.map((_, i) => ({
    id: `e${i}`,
    expr: `x${i} + 0.3 * x${(i + 1) % n} - 0.2 * x${(i + n - 1) % n} = g${i}`,
  })),
};
const A: number[][] = Array.from({ length: n }, (_, i) => {
  const row = new Array<number>(n).fill(0);
  row[i]! += 1;
  row[(i + 1) % n]! += 0.3;
  row[(i + n - 1) % n]! -= 0.2;
  return row;
});
const denseTimes: number[] = [];
let dense: number[] = [];
for (let i = 0; i < 6; i++) {
  const t = performance.now();
  dense = (lusolve(A, gVals) as number[][]).map((r) => r[0]!);
  if (i > 0) denseTimes.push(performance.now() - t);
}
const denseMs = median(denseTimes);
// Ours on equal terms: the system is already read (as lusolve is handed a matrix); we time the
// structure analysis, block decomposition, sparse LU and result assembly.
const prep = prepareModel(modelSchema.parse(sys));
const ourTimes: number[] = [];
let check = 0;
for (let i = 0; i < 31; i++) {
  const t = performance.now();
  const r = solvePrepared(prep, { valuesOnly: true });
  if (i > 0) ourTimes.push(performance.now() - t);
  check = Math.max(...dense.map((v, j) => Math.abs(v - (r.values[`x${j}`]!.value ?? NaN))));
}
const oursMs = median(ourTimes);
if (!(check < 1e-9)) throw new Error(`300-unknown system disagrees with lusolve by ${check}`);
const fullTimes: number[] = [];
for (let i = 0; i < 5; i++) {
  const t = performance.now();
  solvePrepared(prep);
  fullTimes.push(performance.now() - t);
}
const denseRatio300 = denseMs / oursMs;
console.log(
  `300-unknown linear system: mathjs lusolve (dense) ${denseMs.toFixed(1)} ms, engine ${oursMs.toFixed(3)} ms → ×${denseRatio300.toFixed(0)}` +
    ` (max difference ${check.toExponential(1)}; with the full 300×300 stack-up ${median(fullTimes).toFixed(1)} ms)`,
);

// Re-solve of a 200-dimension model after one value changed (warm parse cache).
const m200 = generate(20);
solveModel(m200);
const reTimes: number[] = [];
for (let i = 0; i < 41; i++) {
  const edited = structuredClone(m200);
  (edited.dimensions[0] as Dim).value = (6 + i * 0.001).toFixed(3);
  const t = performance.now();
  solveModel(edited);
  if (i > 0) reTimes.push(performance.now() - t);
}
const resolve200Ms = median(reTimes);
console.log(`re-solve of 200 dimensions after an edit: ${resolve200Ms.toFixed(2)} ms`);

console.log(
  JSON.stringify({
    ms100: round(ms100),
    ms1000: round(ms1000),
    ms10000: round(ms10000),
    growth: round(growth),
    denseRatio300: round(denseRatio300, 1),
    resolve200Ms: round(resolve200Ms),
  }),
);
