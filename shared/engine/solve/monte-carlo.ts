/** The seeded Monte Carlo of a solution: only the blocks its targets depend on re-solved. */
import type { MonteCarloResult } from '../result';
import { runMonteCarlo } from '../stackup';
import { resolveBlocks, type Solution } from './blocks';
import type { SolveOptions } from './options';
import type { PreparedDimension } from './prepare';

/**
 * Samples the given values (σ = half-band / 3 about the band's centre) and re-solves.
 *
 * @example monteCarloOf(sol, blockOf, { samples: 10000, seed: 1 }).values.w.mean // ≈ 1
 */
export function monteCarloOf(
  sol: Solution,
  blockOf: Int32Array,
  mc: NonNullable<SolveOptions['monteCarlo']>,
): MonteCarloResult {
  const { prep, blocks, x } = sol;
  const dims = prep.dimensions;
  const wanted = mc.values
    ? mc.values
        .map((n) => prep.byName.get(n))
        .filter((d): d is PreparedDimension => !!d && !d.given)
    : dims.filter((d) => !d.given);
  const targets = wanted
    .filter((d) => Number.isFinite(x[d.index]))
    .map((d) => ({ name: d.name, index: d.index }));
  // Only the blocks the targets depend on are re-solved per sample. blockOf has an entry for
  // every dimension, each a block's index or −1.
  const need = new Uint8Array(blocks.length);
  const stack = targets.map((t) => blockOf[t.index]!).filter((b) => b >= 0);
  while (stack.length) {
    const b = stack.pop()!;
    if (need[b]) continue;
    need[b] = 1;
    for (const rel of blocks[b]!.relations) {
      for (const v of rel.vars) {
        const upstream = blockOf[v]!;
        if (upstream >= 0 && !need[upstream]) stack.push(upstream);
      }
    }
  }
  const neededBlocks = blocks.filter((_, i) => need[i]);
  const givens = dims
    .filter((d) => d.given && !d.broken && d.halfBand > 0)
    .map((d) => ({ index: d.index, mean: d.value + d.shift, sigma: d.halfBand / 3 }));
  return runMonteCarlo({
    samples: Math.floor(mc.samples),
    seed: mc.seed ?? 1,
    bins: mc.bins ?? 20,
    givens,
    targets,
    x0: x,
    resolve: (xs) => resolveBlocks(sol, xs, neededBlocks),
    onProgress: mc.onProgress,
  });
}
