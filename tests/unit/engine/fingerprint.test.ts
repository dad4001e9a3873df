import { describe, expect, it } from 'vitest';
import { solveModel, upstreamText, type FairsheetModelInput } from '@shared/engine';

const model = (): FairsheetModelInput => ({
  format: 'fairsheet.model',
  version: 1,
  units: 'in',
  dimensions: [
    { name: 'front', kind: 'stated', value: '5 3/8' },
    { name: 'pitch', kind: 'stated', value: '9 1/4' },
    { name: 'gap', kind: 'stated', value: '2 1/16' },
    { name: 'horn1', kind: 'derived' },
    { name: 'horn2', kind: 'derived' },
    { name: 'slot', kind: 'derived' },
  ],
  relations: [
    { id: 'a', expr: 'horn1 = front' },
    { id: 'b', expr: 'horn2 = horn1 + pitch' },
    { id: 'c', expr: 'slot = gap / 2' },
  ],
});

const text = (m: FairsheetModelInput, name: string) => upstreamText(m, solveModel(m), name);

describe('upstreamText', () => {
  it('covers every relation and given value upstream, through intermediate derived values', () => {
    const t = JSON.parse(text(model(), 'horn2')!);
    expect(t.relations.map((r: { id: string }) => r.id)).toEqual(['a', 'b']);
    expect(t.inputs.map((i: { name: string }) => i.name)).toEqual(['front', 'pitch']);
  });

  it('changes when an upstream value, tolerance or relation changes', () => {
    const before = text(model(), 'horn2');
    const value = model();
    (value.dimensions[0] as { value: string }).value = '5 1/2';
    const tol = model();
    (tol.dimensions[1] as { tol?: string }).tol = '0.002';
    const rel = model();
    rel.relations![1]!.expr = 'horn2 = horn1 + pitch + 0';
    for (const changed of [value, tol, rel]) expect(text(changed, 'horn2')).not.toBe(before);
  });

  it('stays the same when something not upstream changes', () => {
    const before = text(model(), 'horn2');
    const other = model();
    (other.dimensions[2] as { value: string }).value = '2 1/8';
    other.dimensions[0]!.label = 'A new label';
    expect(text(other, 'horn2')).toBe(before);
  });

  it('is null for a given or an unsolved value', () => {
    expect(text(model(), 'front')).toBeNull();
    expect(text(model(), 'nosuch')).toBeNull();
  });
});
