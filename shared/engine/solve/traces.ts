/**
 * Traces: the relations (in solving order) and the given inputs behind each derived value and
 * each redundant relation, built once per block by unions over the blocks upstream.
 */
import type { CompiledRelation } from '../expression';
import type { ValueTrace } from '../result';
import type { Solution } from './blocks';

/** The relations and inputs upstream of some relations, as indices. */
export interface TraceSets {
  /** Relation indices, in order of discovery (see `sortRelations`). */
  rs: number[];
  /** Dimension indices of the given inputs. */
  ins: number[];
}

export class Traces {
  /** The block that solved each dimension (−1: given, or not solved by any block). */
  readonly blockOf: Int32Array;
  private readonly relSets: Array<number[] | undefined>;
  private readonly inputSets: Array<number[] | undefined>;
  // Unions by stamping (no Sets): each call bumps `tick`, an index is new if its stamp differs.
  private readonly relStamp: Int32Array;
  private readonly inStamp: Int32Array;
  private readonly blockStamp: Int32Array;
  private tick = 0;
  /** Each relation's place in solving order: blocks in order, then the redundant ones. */
  private readonly order: Int32Array;
  // The unknowns of one block share one trace object, and trace entries are shared between
  // traces (one object per relation and per input).
  private readonly traces: Array<ValueTrace | undefined>;
  private readonly relEntry: Array<{ id: string; expr: string } | undefined>;
  private readonly inputEntry: Array<{ name: string; value: number } | undefined>;

  /**
   * @param build false for a values-only solve: no block's trace is built.
   * @example new Traces(solution, isGiven, true).block(0).relations // [{ id: 'r1', expr: 'w = a - b' }]
   */
  constructor(
    private readonly sol: Solution,
    private readonly isGiven: Uint8Array,
    build: boolean,
  ) {
    const { prep, blocks, structure } = sol;
    const dims = prep.dimensions;
    this.blockOf = new Int32Array(dims.length).fill(-1);
    blocks.forEach((b, i) => b.unknowns.forEach((u) => (this.blockOf[u] = i)));
    this.relSets = new Array(blocks.length);
    this.inputSets = new Array(blocks.length);
    this.relStamp = new Int32Array(prep.relations.length);
    this.inStamp = new Int32Array(dims.length);
    this.blockStamp = new Int32Array(blocks.length + 1);
    if (build) {
      blocks.forEach((b, i) => {
        if (!b.ok) return;
        const t = this.of(b.relations, b.relationIndices, i);
        this.relSets[i] = t.rs;
        this.inputSets[i] = t.ins;
      });
    }
    this.order = new Int32Array(prep.relations.length).fill(-1);
    let k = 0;
    for (const b of blocks) for (const r of b.relationIndices) this.order[r] = k++;
    for (const r of structure.redundant) this.order[r] = k++;
    this.traces = new Array(blocks.length);
    this.relEntry = new Array(prep.relations.length);
    this.inputEntry = new Array(dims.length);
  }

  /**
   * The relations and inputs behind `rels` (of block `selfBlock`, or −1 for a redundant one):
   * their upstream blocks' traces and their own given inputs, with `own` relation indices.
   */
  of(rels: readonly CompiledRelation[], own: readonly number[], selfBlock: number): TraceSets {
    const { isGiven, inStamp, relStamp, blockStamp, blockOf, relSets, inputSets } = this;
    const tick = ++this.tick;
    const rs: number[] = [];
    const ins: number[] = [];
    for (const rel of rels) {
      for (const v of rel.vars) {
        if (isGiven[v]) {
          if (inStamp[v] !== tick) {
            inStamp[v] = tick;
            ins.push(v);
          }
          continue;
        }
        // blockOf has an entry for every dimension; relSets and inputSets one for every block.
        const bi = blockOf[v]!;
        const upstream = relSets[bi];
        if (bi < 0 || bi === selfBlock || !upstream || blockStamp[bi] === tick) continue;
        blockStamp[bi] = tick;
        for (const r of upstream) {
          if (relStamp[r] !== tick) {
            relStamp[r] = tick;
            rs.push(r);
          }
        }
        for (const g of inputSets[bi]!) {
          if (inStamp[g] !== tick) {
            inStamp[g] = tick;
            ins.push(g);
          }
        }
      }
    }
    for (const r of own) {
      if (relStamp[r] !== tick) {
        relStamp[r] = tick;
        rs.push(r);
      }
    }
    return { rs, ins };
  }

  /** Relation indices in solving order (a new array). */
  sortRelations(s: readonly number[]): number[] {
    return [...s].sort((p, q) => this.order[p]! - this.order[q]!);
  }

  /** The trace of a solved block's unknowns: one object shared by all of them. */
  block(bi: number): ValueTrace {
    const { prep } = this.sol;
    const dims = prep.dimensions;
    // The sets hold indices of the model's relations and dimensions.
    return (this.traces[bi] ??= {
      relations: this.sortRelations(this.relSets[bi]!).map((i) => {
        const { id, expr } = prep.relations[i]!;
        return (this.relEntry[i] ??= { id, expr });
      }),
      inputs: [...this.inputSets[bi]!]
        .sort((p, q) => p - q)
        .map((i) => {
          const { name, value } = dims[i]!;
          return (this.inputEntry[i] ??= { name, value });
        }),
    });
  }
}
