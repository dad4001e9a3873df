/**
 * The structure of a set of relations: which unknowns each relation can fix, and in what order.
 *
 * Relations and unknowns form a bipartite graph. A maximum matching (Hopcroft–Karp) pairs each
 * relation with at most one unknown it determines. The Dulmage–Mendelsohn decomposition then
 * splits the graph:
 * - under-determined part: unknowns reachable from an unmatched unknown by alternating paths.
 *   They cannot be fixed; each group needs as many more dimensions as it has unmatched unknowns.
 * - over-determined part: relations reachable from an unmatched relation. The unmatched
 *   relations are redundant: checks of the drawing against itself.
 * - everything else matched is solvable; its relations, linked by "uses an unknown fixed by",
 *   fall into strongly connected blocks (Tarjan), emitted so that every block comes after the
 *   blocks it depends on. The over-determined part's matched relations are solved the same way,
 *   so its unknowns get values and the redundant relations can be evaluated.
 * All graph walks are iterative so long chains cannot overflow the call stack. Every index is a
 * relation or unknown number below the count its array was sized by, hence the `!` on reads.
 */

export interface StructureBlock {
  /** Relations of the block; relations[i] is matched to unknowns[i]. */
  relations: number[];
  unknowns: number[];
}

export interface UnderdeterminedPart {
  unknowns: number[];
  relations: number[];
  /** How many more independent dimensions this group needs. */
  needs: number;
  /** One set of unknowns that, if measured, would fix the group. */
  measure: number[];
}

export interface StructureResult {
  /** matchOfRelation[r] = unknown fixed by r, or −1. */
  matchOfRelation: Int32Array;
  /** matchOfUnknown[u] = relation fixing u, or −1. */
  matchOfUnknown: Int32Array;
  /** Solvable square blocks in dependency order. */
  blocks: StructureBlock[];
  /** Unmatched (redundant) relations, ascending. */
  redundant: number[];
  underdetermined: UnderdeterminedPart[];
  /** Relations and unknowns of the over-determined part. */
  overdetermined: { relations: number[]; unknowns: number[] };
  /** Total further dimensions needed (number of unmatched unknowns). */
  needs: number;
}

/**
 * Maximum bipartite matching by Hopcroft–Karp, seeded greedily in input order (so earlier
 * relations tend to be the ones used, later ones the checks).
 *
 * @example maximumMatching(2, 2, [[0, 1], [0]]).matchOfRelation // Int32Array [1, 0]
 */
export function maximumMatching(
  relationCount: number,
  unknownCount: number,
  edges: readonly ArrayLike<number>[],
): { matchOfRelation: Int32Array; matchOfUnknown: Int32Array } {
  const mL = new Int32Array(relationCount).fill(-1);
  const mR = new Int32Array(unknownCount).fill(-1);
  for (let r = 0; r < relationCount; r++) {
    const e = edges[r]!;
    for (let t = 0; t < e.length; t++) {
      if (mR[e[t]!]! < 0) {
        mL[r] = e[t]!;
        mR[e[t]!] = r;
        break;
      }
    }
  }
  const INF = 0x7fffffff;
  const dist = new Int32Array(relationCount);
  const queue = new Int32Array(relationCount);
  const it = new Int32Array(relationCount);
  const stack = new Int32Array(relationCount);
  for (;;) {
    let qh = 0;
    let qt = 0;
    for (let r = 0; r < relationCount; r++) {
      if (mL[r]! < 0) {
        dist[r] = 0;
        queue[qt++] = r;
      } else dist[r] = INF;
    }
    let found = false;
    while (qh < qt) {
      const r = queue[qh++]!;
      const e = edges[r]!;
      for (let t = 0; t < e.length; t++) {
        const w = mR[e[t]!]!;
        if (w < 0) found = true;
        else if (dist[w] === INF) {
          dist[w] = dist[r]! + 1;
          queue[qt++] = w;
        }
      }
    }
    if (!found) break;
    it.fill(0);
    let augmented = false;
    for (let s = 0; s < relationCount; s++) {
      if (mL[s]! >= 0) continue;
      let top = 0;
      stack[0] = s;
      while (top >= 0) {
        const v = stack[top]!;
        const e = edges[v]!;
        if (it[v]! >= e.length) {
          dist[v] = INF;
          top--;
          continue;
        }
        const u = e[it[v]!++]!;
        const w = mR[u]!;
        if (w < 0) {
          // Augment along the stack: each relation on it takes the unknown of its current edge.
          for (let i = top; i >= 0; i--) {
            const vv = stack[i]!;
            const uu = edges[vv]![it[vv]! - 1]!;
            mL[vv] = uu;
            mR[uu] = vv;
          }
          augmented = true;
          break;
        }
        if (dist[w] === dist[v]! + 1) stack[++top] = w;
      }
    }
    if (!augmented) break;
  }
  return { matchOfRelation: mL, matchOfUnknown: mR };
}

/**
 * Decomposes relations × unknowns (edges[r] lists the unknowns relation r contains).
 *
 * @example
 * // r0: x + y = a, r1: x − y = b, r2: z = c + x
 * analyseStructure(3, 3, [[0, 1], [0, 1], [2, 0]]).blocks
 * // [{ relations: [0, 1], unknowns: [..] }, { relations: [2], unknowns: [2] }]
 */
export function analyseStructure(
  relationCount: number,
  unknownCount: number,
  edges: readonly ArrayLike<number>[],
): StructureResult {
  const { matchOfRelation: mL, matchOfUnknown: mR } = maximumMatching(
    relationCount,
    unknownCount,
    edges,
  );

  // Unknown → relations containing it.
  const degree = new Int32Array(unknownCount + 1);
  for (let r = 0; r < relationCount; r++) {
    const e = edges[r]!;
    for (let t = 0; t < e.length; t++) degree[e[t]! + 1]!++;
  }
  for (let u = 0; u < unknownCount; u++) degree[u + 1]! += degree[u]!;
  const start = degree;
  const fill = start.slice(0, unknownCount);
  const byUnknown = new Int32Array(start[unknownCount]!);
  for (let r = 0; r < relationCount; r++) {
    const e = edges[r]!;
    for (let t = 0; t < e.length; t++) byUnknown[fill[e[t]!]!++] = r;
  }

  // Under-determined: alternating paths from unmatched unknowns.
  const underU = new Uint8Array(unknownCount);
  const underR = new Uint8Array(relationCount);
  const queue: number[] = [];
  for (let u = 0; u < unknownCount; u++) {
    if (mR[u]! < 0) {
      underU[u] = 1;
      queue.push(u);
    }
  }
  for (let qi = 0; qi < queue.length; qi++) {
    const u = queue[qi]!;
    for (let p = start[u]!; p < start[u + 1]!; p++) {
      const r = byUnknown[p]!;
      if (underR[r]) continue;
      underR[r] = 1;
      const w = mL[r]!;
      if (w >= 0 && !underU[w]) {
        underU[w] = 1;
        queue.push(w);
      }
    }
  }

  // Over-determined: alternating paths from unmatched relations.
  const overR = new Uint8Array(relationCount);
  const overU = new Uint8Array(unknownCount);
  const rq: number[] = [];
  for (let r = 0; r < relationCount; r++) {
    if (mL[r]! < 0) {
      overR[r] = 1;
      rq.push(r);
    }
  }
  for (let qi = 0; qi < rq.length; qi++) {
    const e = edges[rq[qi]!]!;
    for (let t = 0; t < e.length; t++) {
      const u = e[t]!;
      if (overU[u]) continue;
      overU[u] = 1;
      const r2 = mR[u]!;
      if (r2 >= 0 && !overR[r2]) {
        overR[r2] = 1;
        rq.push(r2);
      }
    }
  }

  const blocks = tarjanBlocks(relationCount, edges, mL, mR, underR);

  // Group the under-determined part by shared relations (union-find over unknowns).
  const parent = new Int32Array(unknownCount);
  for (let u = 0; u < unknownCount; u++) parent[u] = u;
  const find = (a: number): number => {
    while (parent[a] !== a) {
      parent[a] = parent[parent[a]!]!;
      a = parent[a]!;
    }
    return a;
  };
  const underRelations: number[] = [];
  for (let r = 0; r < relationCount; r++) {
    if (!underR[r]) continue;
    underRelations.push(r);
    let first = -1;
    const e = edges[r]!;
    for (let t = 0; t < e.length; t++) {
      if (!underU[e[t]!]) continue;
      if (first < 0) first = e[t]!;
      else parent[find(e[t]!)] = find(first);
    }
  }
  const groups = new Map<number, UnderdeterminedPart>();
  for (let u = 0; u < unknownCount; u++) {
    if (!underU[u]) continue;
    const root = find(u);
    let g = groups.get(root);
    if (!g) {
      g = { unknowns: [], relations: [], needs: 0, measure: [] };
      groups.set(root, g);
    }
    g.unknowns.push(u);
    if (mR[u]! < 0) {
      g.needs++;
      g.measure.push(u);
    }
  }
  for (const r of underRelations) {
    const e = edges[r]!;
    for (let t = 0; t < e.length; t++) {
      if (underU[e[t]!]) {
        groups.get(find(e[t]!))!.relations.push(r);
        break;
      }
    }
  }

  const redundant: number[] = [];
  for (let r = 0; r < relationCount; r++) if (mL[r]! < 0) redundant.push(r);
  const overRelations: number[] = [];
  for (let r = 0; r < relationCount; r++) if (overR[r]) overRelations.push(r);
  const overUnknowns: number[] = [];
  for (let u = 0; u < unknownCount; u++) if (overU[u]) overUnknowns.push(u);
  let needs = 0;
  for (let u = 0; u < unknownCount; u++) if (mR[u]! < 0) needs++;

  return {
    matchOfRelation: mL,
    matchOfUnknown: mR,
    blocks,
    redundant,
    underdetermined: [...groups.values()],
    overdetermined: { relations: overRelations, unknowns: overUnknowns },
    needs,
  };
}

/**
 * Strongly connected blocks of the matched, determinable relations, dependencies first.
 * Edge r → r' when r uses an unknown that r' fixes. Tarjan emits a component only after every
 * component reachable from it, which is exactly dependency order.
 */
function tarjanBlocks(
  relationCount: number,
  edges: readonly ArrayLike<number>[],
  mL: Int32Array,
  mR: Int32Array,
  skip: Uint8Array,
): StructureBlock[] {
  const index = new Int32Array(relationCount).fill(-1);
  const low = new Int32Array(relationCount);
  const onStack = new Uint8Array(relationCount);
  const sccStack = new Int32Array(relationCount);
  let sp = 0;
  const callNode = new Int32Array(relationCount);
  const callEdge = new Int32Array(relationCount);
  let counter = 0;
  const blocks: StructureBlock[] = [];
  for (let s = 0; s < relationCount; s++) {
    if (mL[s]! < 0 || skip[s] || index[s]! >= 0) continue;
    let cp = 0;
    callNode[0] = s;
    callEdge[0] = 0;
    index[s] = low[s] = counter++;
    sccStack[sp++] = s;
    onStack[s] = 1;
    while (cp >= 0) {
      const v = callNode[cp]!;
      const e = edges[v]!;
      if (callEdge[cp]! < e.length) {
        const u = e[callEdge[cp]!++]!;
        if (u === mL[v]) continue;
        const w = mR[u]!;
        if (w < 0 || skip[w]) continue;
        if (index[w]! < 0) {
          index[w] = low[w] = counter++;
          sccStack[sp++] = w;
          onStack[w] = 1;
          cp++;
          callNode[cp] = w;
          callEdge[cp] = 0;
        } else if (onStack[w] && index[w]! < low[v]!) {
          low[v] = index[w]!;
        }
      } else {
        cp--;
        if (cp >= 0) {
          const p = callNode[cp]!;
          if (low[v]! < low[p]!) low[p] = low[v]!;
        }
        if (low[v] === index[v]) {
          const rel: number[] = [];
          let w: number;
          do {
            w = sccStack[--sp]!;
            onStack[w] = 0;
            rel.push(w);
          } while (w !== v);
          rel.sort((a, b) => a - b);
          blocks.push({ relations: rel, unknowns: rel.map((r) => mL[r]!) });
        }
      }
    }
  }
  return blocks;
}
