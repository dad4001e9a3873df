// The editing rules of parts and features (src/lib/part-rules.ts) and the parts store that
// enforces them on the working model; no browser, no server.
import { createPinia, setActivePinia } from 'pinia';
import { beforeEach, describe, expect, it } from 'vitest';
import type { FairsheetModelInput } from '@shared/engine';
import {
  dropPart,
  featureDraft,
  featureFromDraft,
  featureProblems,
  nextFeatureId,
  partDraft,
  partFromDraft,
  partProblems,
  putFeature,
  type Feature,
} from '@/lib/part-rules';
import { useModelStore } from '@/stores/model';
import { usePartsStore } from '@/stores/parts';

const names = new Set(['a', 'b']);

function model(): FairsheetModelInput {
  return {
    format: 'fairsheet.model',
    version: 1,
    units: 'in',
    dimensions: [
      { name: 'a', kind: 'stated', value: 1, tol: 0.01 },
      { name: 'b', kind: 'stated', value: 2, tol: 0.01 },
    ],
    relations: [],
    parts: [{ id: 'plate', name: 'Plate', material: 'mild-steel' }],
    features: [{ id: 'f1', part: 'plate', kind: 'hole', x: 'a', y: 'b', depth: 'through' }],
  };
}

describe('part rules', () => {
  it('refuses a taken or malformed id and a blank name, and lets a part keep its own id', () => {
    const d = { ...partDraft(null), id: 'plate', name: ' ' };
    const p = partProblems(d, { names, takenIds: ['plate'] });
    expect(p.id).toBe('Another part has this id');
    expect(p.name).toBe('Give the part a name');
    expect(partProblems({ ...d, id: '1x' }, { names, takenIds: [] }).id).toBe(
      'A letter or _ then letters, digits or _',
    );
    expect(partProblems(d, { names, takenIds: ['plate'], ownId: 'plate' }).id).toBe('');
  });

  it('names an unknown dimension in an outline and leaves an empty outline alone', () => {
    const d = { ...partDraft(null), id: 'p', name: 'P', width: 'a + c', height: '' };
    const p = partProblems(d, { names, takenIds: [] });
    expect(p.width).toBe('No dimension named c');
    expect(p.height).toBe('');
  });

  it('writes a part back as it was read, trimmed, without empty fields', () => {
    const part = {
      id: 'p',
      name: 'P',
      material: 'brass',
      quantity: 2,
      stack: 'frames',
      pressure: true,
      drillSet: 'fractional' as const,
      width: 'a',
      notes: 'datum left',
    };
    expect(partFromDraft(partDraft(part))).toEqual(part);
    expect(partFromDraft({ ...partDraft(null), id: 'q', name: ' Q ' })).toEqual({
      id: 'q',
      name: 'Q',
      material: 'mild-steel',
      quantity: 1,
      pressure: false,
      drillSet: 'metric',
    });
  });

  it('gives a new feature the first free id counting on from the number of features', () => {
    expect(nextFeatureId([])).toBe('f1');
    expect(nextFeatureId(['f1', 'f3'])).toBe('f4');
    expect(nextFeatureId(['x', 'f2'])).toBe('f3');
    expect(featureDraft(null, ['f1']).id).toBe('f2');
  });

  it('requires a position, a thread for a tapped hole, a size for a pattern and a readable drill', () => {
    const d = {
      ...featureDraft(null, []),
      kind: 'tapped' as const,
      x: '',
      y: 'a',
      pattern: 'circle' as const,
      drill: 'zz',
    };
    const p = featureProblems(d, { names, takenIds: [] });
    expect(p.x).toBe('Give a figure or an expression');
    expect(p.y).toBe('');
    expect(p.thread).toBe('A tapped hole needs a thread');
    expect(p.size).toBe('Give a figure or an expression');
    expect(p.drill).toBe('Write a drill as #29, F, 7/64" or 3.3 mm');
  });

  it('writes a feature back as it was read', () => {
    const f: Feature = {
      id: 'f2',
      part: 'plate',
      kind: 'hole',
      x: 'a',
      y: 'b',
      label: 'studs',
      thread: 'M4',
      clearance: 'close',
      depth: 'through',
      pattern: { type: 'circle', count: 6, pcd: '2', startDeg: 30 },
    };
    expect(featureFromDraft(featureDraft(f, []), 'plate')).toEqual(f);
  });

  it('replaces a renamed feature in place and takes a part’s features out with it', () => {
    const m = model();
    putFeature(m, { ...m.features![0]!, id: 'g1' }, 'f1');
    expect(m.features!.map((f) => f.id)).toEqual(['g1']);
    dropPart(m, 'plate');
    expect(m.parts).toEqual([]);
    expect(m.features).toEqual([]);
  });
});

describe('the parts store', () => {
  beforeEach(() => {
    setActivePinia(createPinia());
    useModelStore().model = model();
  });

  it('refuses a part that breaks a rule and leaves the model as it was', () => {
    const store = useModelStore();
    const parts = usePartsStore();
    const problem = parts.savePart({ ...partDraft(null), id: 'plate', name: 'Again' });
    expect(problem).toBe('Another part has this id');
    expect(store.model.parts).toHaveLength(1);
    expect(store.canUndo).toBe(false);
  });

  it('adds a feature to a part as one model edit that undo takes back', () => {
    const store = useModelStore();
    const parts = usePartsStore();
    const draft = { ...parts.featureForm(null), x: 'a', y: '0' };
    expect(draft.id).toBe('f2');
    expect(parts.saveFeature(draft, 'plate')).toBe('');
    expect(parts.featuresOf('plate').map((f) => f.id)).toEqual(['f1', 'f2']);
    store.undo();
    expect(parts.featuresOf('plate').map((f) => f.id)).toEqual(['f1']);
  });

  it('removes a part with its features in one step', () => {
    const store = useModelStore();
    const parts = usePartsStore();
    parts.removePart('plate');
    expect(parts.parts).toEqual([]);
    expect(parts.features).toEqual([]);
    store.undo();
    expect(parts.parts.map((p) => p.id)).toEqual(['plate']);
    expect(parts.features.map((f) => f.id)).toEqual(['f1']);
  });

  it('evaluates the features at the model store’s solve', () => {
    const store = useModelStore();
    store.solveNow();
    const f1 = usePartsStore().evaluated.features.find((f) => f.id === 'f1');
    // x = a = 1, y = b = 2 (the dimensions above).
    expect(f1?.rows[0]!.x.value).toBeCloseTo(1, 12);
    expect(f1?.rows[0]!.y.value).toBeCloseTo(2, 12);
  });
});
