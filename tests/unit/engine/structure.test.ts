import { describe, expect, it } from 'vitest';
import { analyseStructure, maximumMatching } from '@shared/engine/structure';

describe('maximumMatching', () => {
  it('finds a perfect matching that greedy order alone would miss', () => {
    // Greedy gives r0→u0 and strands r1; an augmenting path moves r0 to u1.
    const m = maximumMatching(2, 2, [[0, 1], [0]]);
    expect([...m.matchOfRelation]).toEqual([1, 0]);
  });
});

describe('analyseStructure', () => {
  it('orders a chain so each relation comes after what it uses', () => {
    // r0: u0 = g ; r1: u1 = u0 + g ; r2: u2 = u1 + g (listed backwards)
    const s = analyseStructure(3, 3, [[2, 1], [1, 0], [0]]);
    expect(s.blocks.map((b) => b.unknowns)).toEqual([[0], [1], [2]]);
    expect(s.needs).toBe(0);
    expect(s.redundant).toEqual([]);
  });

  it('puts coupled unknowns in one strongly connected block', () => {
    // r0: x + y = a, r1: x − y = b (coupled), r2: z = x + c
    const s = analyseStructure(3, 3, [
      [0, 1],
      [0, 1],
      [2, 0],
    ]);
    expect(s.blocks).toHaveLength(2);
    expect(s.blocks[0]!.relations).toEqual([0, 1]);
    expect([...s.blocks[0]!.unknowns].sort()).toEqual([0, 1]);
    expect(s.blocks[1]).toEqual({ relations: [2], unknowns: [2] });
  });

  it('finds a cycle through several relations as one block', () => {
    // u0 needs u1, u1 needs u2, u2 needs u0
    const s = analyseStructure(3, 3, [
      [0, 1],
      [1, 2],
      [2, 0],
    ]);
    expect(s.blocks).toHaveLength(1);
    expect(s.blocks[0]!.relations).toEqual([0, 1, 2]);
  });

  it('reports the under-determined part and how many more dimensions it needs', () => {
    // r0: x + y + z = a, r1: y = b → x, z cannot both be fixed: one more needed
    const s = analyseStructure(2, 3, [[0, 1, 2], [1]]);
    expect(s.needs).toBe(1);
    expect(s.underdetermined).toHaveLength(1);
    expect([...s.underdetermined[0]!.unknowns].sort()).toEqual([0, 2]);
    expect(s.underdetermined[0]!.needs).toBe(1);
    expect(s.underdetermined[0]!.measure).toHaveLength(1);
    expect(s.blocks.map((b) => b.unknowns)).toEqual([[1]]);
  });

  it('separates independent under-determined groups', () => {
    // u0 + u1 = a ; u2 + u3 + u4 = b
    const s = analyseStructure(2, 5, [
      [0, 1],
      [2, 3, 4],
    ]);
    expect(s.needs).toBe(3);
    expect(s.underdetermined.map((g) => g.needs).sort()).toEqual([1, 2]);
  });

  it('counts an unknown in no relation as needing one dimension', () => {
    const s = analyseStructure(0, 1, []);
    expect(s.needs).toBe(1);
    expect(s.underdetermined[0]!.unknowns).toEqual([0]);
  });

  it('reports redundant relations in the over-determined part', () => {
    // r0: x = a ; r1: x = b (a check) ; r2: a = b + c (all given: a check)
    const s = analyseStructure(3, 1, [[0], [0], []]);
    expect(s.redundant).toEqual([1, 2]);
    expect(s.overdetermined.relations).toEqual([0, 1, 2]);
    expect(s.overdetermined.unknowns).toEqual([0]);
    expect(s.blocks).toEqual([{ relations: [0], unknowns: [0] }]);
  });

  it('handles a chain of 50,000 relations without deep recursion', () => {
    const n = 50_000;
    const edges = Array.from({ length: n }, (_, i) => (i === 0 ? [0] : [i, i - 1]));
    const s = analyseStructure(n, n, edges);
    expect(s.blocks).toHaveLength(n);
    expect(s.blocks[n - 1]!.unknowns).toEqual([n - 1]);
  });
});
