import { describe, expect, it } from 'vitest';
import {
  applyDiff,
  diffModels,
  isEmptyDiff,
  movedValues,
  solveModel,
  summariseDiff,
  type FairsheetModelInput,
} from '@shared/engine';

const base: FairsheetModelInput = {
  format: 'fairsheet.model',
  version: 1,
  units: 'in',
  dimensions: [
    { name: 'overall', kind: 'stated', value: '6 1/4' },
    { name: 'boss', kind: 'stated', value: '3/4' },
    { name: 'slot', kind: 'derived' },
  ],
  relations: [{ id: 'r1', expr: 'overall = boss + slot' }],
  parts: [{ id: 'bar', name: 'Bar' }],
  features: [],
};

const edit = (change: (m: FairsheetModelInput) => void) => {
  const m = structuredClone(base);
  change(m);
  return m;
};

describe('diffModels', () => {
  it('names a changed field, an added dimension, a removed relation and a new feature', () => {
    const after = edit((m) => {
      (m.dimensions[0] as { value: string }).value = '6 3/8';
      m.dimensions.push({ name: 'web', kind: 'stated', value: '1/2' });
      m.relations = [];
      m.features = [{ id: 'h1', part: 'bar', kind: 'hole', x: 'slot', y: 0.25 }];
    });
    const d = diffModels(base, after);
    expect(d.dimensions).toEqual([
      expect.objectContaining({
        key: 'overall',
        change: 'changed',
        fields: [{ field: 'value', from: '6 1/4', to: '6 3/8' }],
      }),
      expect.objectContaining({ key: 'web', change: 'added' }),
    ]);
    expect(d.relations).toEqual([expect.objectContaining({ key: 'r1', change: 'removed' })]);
    expect(d.features).toEqual([expect.objectContaining({ key: 'h1', change: 'added' })]);
    expect(summariseDiff(d)).toBe(
      'overall value 6 1/4 → 6 3/8; added web; removed relation r1; added feature h1',
    );
    expect(isEmptyDiff(diffModels(base, structuredClone(base)))).toBe(true);
  });

  it('sees a change of the implied-tolerance rules alone, and replays it', () => {
    const after = edit((m) => (m.defaults = { angleDeg: 1 }));
    const d = diffModels(base, after);
    expect(d.defaults).toEqual({ from: undefined, to: { angleDeg: 1 } });
    expect(isEmptyDiff(d)).toBe(false);
    expect(summariseDiff(d)).toBe('tolerance defaults edited');
    expect(applyDiff(base, d).defaults).toEqual({ angleDeg: 1 });
  });

  it('finds no change in a model whose keys come back in another order, as from jsonb', () => {
    // PostgreSQL's jsonb keeps its own key order, not the input's (PostgreSQL manual, 8.14
    // "JSON Types"): reversing every object's keys stands in for the round trip.
    const reordered = (v: unknown): unknown =>
      Array.isArray(v)
        ? v.map(reordered)
        : v && typeof v === 'object'
          ? Object.fromEntries(
              Object.entries(v)
                .reverse()
                .map(([k, x]) => [k, reordered(x)]),
            )
          : v;
    const withPattern = edit((m) => {
      m.defaults = { angleDeg: 0.5, assumed: 0 };
      m.features = [
        {
          id: 'studs',
          part: 'bar',
          kind: 'hole',
          x: 1,
          y: 1,
          pattern: { type: 'circle', count: 4, pcd: '0.89', startDeg: 45 },
        },
      ];
    });
    const back = reordered(withPattern) as FairsheetModelInput;
    expect(JSON.stringify(back.features![0]!.pattern)).not.toBe(
      JSON.stringify(withPattern.features![0]!.pattern),
    );
    const d = diffModels(withPattern, back);
    expect(isEmptyDiff(d)).toBe(true);
    expect(summariseDiff(d)).toBe('no change');
    // A real change inside the nested object is still one.
    const moved = structuredClone(back);
    (moved.features![0]!.pattern as { startDeg: number }).startDeg = 30;
    expect(diffModels(withPattern, moved).features).toEqual([
      expect.objectContaining({
        key: 'studs',
        change: 'changed',
        fields: [
          {
            field: 'pattern',
            from: withPattern.features![0]!.pattern,
            to: moved.features![0]!.pattern,
          },
        ],
      }),
    ]);
  });

  it('replays an edit on a newer model field by field: both editors’ changes survive', () => {
    const mine = edit((m) => ((m.dimensions[1] as { value: string }).value = '7/8'));
    const theirs = edit((m) => {
      (m.dimensions[0] as { value: string }).value = '6 1/2';
      m.dimensions[1]!.label = 'Boss length';
    });
    const merged = applyDiff(theirs, diffModels(base, mine));
    expect(merged.dimensions[0]).toMatchObject({ value: '6 1/2' });
    expect(merged.dimensions[1]).toMatchObject({ value: '7/8', label: 'Boss length' });
  });

  it('lists derived values that moved between two solves', () => {
    const after = edit((m) => ((m.dimensions[0] as { value: string }).value = '6 3/8'));
    const moves = movedValues(solveModel(base), solveModel(after));
    // 6 1/4 − 3/4 = 5 1/2; 6 3/8 − 3/4 = 5 5/8: the slot grows by 1/8 (exact binary fractions).
    expect(moves.map((m) => m.name)).toEqual(['overall', 'slot']);
    expect(moves[1]!.delta).toBeCloseTo(0.125, 12);
  });
});
