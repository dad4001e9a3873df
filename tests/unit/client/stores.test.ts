import { createPinia, setActivePinia } from 'pinia';
import { beforeEach, describe, expect, it, vi } from 'vitest';
import type { MeasureAnswer, Sheet } from '@shared/api';
import type { FairsheetModelInput } from '@shared/engine';
import { ApiError } from '@/api/client';

// The stores' API modules stand in for the server: each call is recorded and answered by the
// test. What is checked is what the stores send and how they take the answers.
const api = vi.hoisted(() => ({
  modelGet: vi.fn(),
  modelSave: vi.fn(),
  sheetGet: vi.fn(),
  sheetUpdate: vi.fn(),
  sheetMeasure: vi.fn(),
}));
vi.mock('@/api/models', () => ({ modelsApi: { get: api.modelGet, save: api.modelSave } }));
vi.mock('@/api/sheets', () => ({
  sheetsApi: { get: api.sheetGet, update: api.sheetUpdate, measure: api.sheetMeasure },
}));

const { useModelStore } = await import('@/stores/model');
const { useSheetsStore } = await import('@/stores/sheets');

const projectId = '00000000-0000-4000-8000-000000000001';
const sheetId = '00000000-0000-4000-8000-000000000002';

const model = (dims: Record<string, string>): FairsheetModelInput => ({
  format: 'fairsheet.model',
  version: 1,
  units: 'in',
  dimensions: Object.entries(dims).map(([name, value]) => ({
    name,
    kind: 'stated' as const,
    quantity: 'length' as const,
    value,
  })),
  relations: [],
});

const sheet = (revision: number, more: Partial<Sheet> = {}): Sheet => ({
  id: sheetId,
  projectId,
  title: 'plate',
  kind: 'drawing',
  page: 1,
  pageCount: 1,
  widthPx: 1200,
  heightPx: 600,
  rotation: 0,
  straighten: 0,
  calibration: null,
  pins: [],
  measurements: [],
  file: { sha256: 'f'.repeat(64), mimeType: 'image/png', originalName: 'plate.png', sizeBytes: 1 },
  revision,
  createdAt: '2025-01-01T00:00:00.000Z',
  updatedAt: '2025-01-01T00:00:00.000Z',
  ...more,
});

/** A dimension's value (a derived one has none). */
const valueOf = (d: FairsheetModelInput['dimensions'][number]) =>
  'value' in d ? d.value : undefined;

const conflict = (details: unknown) => new ApiError(409, 'conflict', 'Someone else saved', details);

async function openBoth(m = model({ a: '1', b: '2' }), s = sheet(3)) {
  api.modelGet.mockResolvedValueOnce({
    revision: 7,
    model: m,
    result: null,
    updatedAt: '',
    updatedBy: null,
  });
  api.sheetGet.mockResolvedValueOnce(structuredClone(s));
  const models = useModelStore();
  const sheets = useSheetsStore();
  await models.load(projectId);
  await sheets.open(projectId, sheetId);
  return { models, sheets };
}

beforeEach(() => {
  setActivePinia(createPinia());
  vi.clearAllMocks();
});

describe('the model store', () => {
  it('undo steps back one edit at a time, and the edits of one form are one step', async () => {
    const { models } = await openBoth();
    models.edit((m) => void (m.dimensions[0]!.label = 'f'), 'form a');
    models.edit((m) => void (m.dimensions[0]!.label = 'fo'), 'form a');
    models.edit((m) => void (m.dimensions[0]!.label = 'foot'), 'form a');
    models.removeDimension('b');
    expect(models.dirty).toBe(true);
    models.undo();
    expect(models.model.dimensions.map((d) => d.name)).toEqual(['a', 'b']);
    models.undo();
    expect(models.model.dimensions[0]!.label).toBeUndefined();
    expect(models.canUndo).toBe(false);
  });

  it('a 409 shows both sides; re-applying mine keeps their change and mine, and saves at their revision', async () => {
    const { models } = await openBoth();
    models.upsertDimension({ name: 'b', kind: 'stated', quantity: 'length', value: '2 1/8' });
    api.modelSave.mockRejectedValueOnce(
      conflict({ currentRevision: 8, model: model({ a: '1 1/4', b: '2' }) }),
    );
    await expect(models.save()).rejects.toBeInstanceOf(ApiError);
    expect(models.conflict?.currentRevision).toBe(8);
    expect(models.conflict?.theirChanges.dimensions.map((c) => c.key)).toEqual(['a']);
    expect(models.conflict?.myChanges.dimensions.map((c) => c.key)).toEqual(['b']);
    // Still mine until the builder chooses.
    expect(models.model.dimensions.map(valueOf)).toEqual(['1', '2 1/8']);

    models.reapplyMine();
    expect(models.model.dimensions.map(valueOf)).toEqual(['1 1/4', '2 1/8']);
    api.modelSave.mockResolvedValueOnce({ revision: 9, result: {}, summary: 'b edited' });
    await models.save();
    expect(api.modelSave).toHaveBeenLastCalledWith(projectId, 8, models.model, undefined);
    expect(models.revision).toBe(9);
    expect(models.dirty).toBe(false);
  });

  it('a save asked for while one is in flight waits, then sends what was edited meanwhile', async () => {
    const { models } = await openBoth();
    let answer!: (v: unknown) => void;
    api.modelSave.mockReturnValueOnce(new Promise((r) => (answer = r)));
    api.modelSave.mockResolvedValueOnce({ revision: 9, result: {}, summary: '' });
    models.upsertDimension({ name: 'c', kind: 'stated', quantity: 'length', value: '3' });
    const first = models.save();
    models.upsertDimension({ name: 'd', kind: 'stated', quantity: 'length', value: '4' });
    const second = models.save();
    expect(api.modelSave).toHaveBeenCalledTimes(1);
    answer({ revision: 8, result: {}, summary: '' });
    await Promise.all([first, second]);
    expect(api.modelSave).toHaveBeenCalledTimes(2);
    const [, revision, sent] = api.modelSave.mock.calls[1]!;
    expect(revision).toBe(8);
    expect(sent.dimensions.map((d: { name: string }) => d.name)).toEqual(['a', 'b', 'c', 'd']);
    expect(models.revision).toBe(9);
  });
});

describe('the sheets store', () => {
  it('a 409 on a sheet merges the other save with these edits instead of discarding them', async () => {
    const { sheets } = await openBoth();
    sheets.addPin({ x: 10, y: 10 }, 'mine');
    const theirs = sheet(4, { pins: [{ id: 'q1', x: 50, y: 50, label: 'theirs' }] });
    api.sheetUpdate
      .mockRejectedValueOnce(conflict({ currentRevision: 4, sheet: theirs }))
      .mockImplementationOnce(async (_p, _s, { revision, ...body }) => sheet(revision + 1, body));
    await sheets.save();
    expect(api.sheetUpdate).toHaveBeenCalledTimes(2);
    const body = api.sheetUpdate.mock.calls[1]![2];
    expect(body.revision).toBe(4);
    expect(body.pins.map((p: { label: string }) => p.label)).toEqual(['theirs', 'mine']);
    expect(sheets.current?.pins.map((p) => p.label)).toEqual(['theirs', 'mine']);
    expect(sheets.current?.revision).toBe(5);
    expect(sheets.saveState).toBe('saved');
    expect(sheets.notice).toMatch(/Their changes and yours are both kept/);
  });

  it('a 409 where both moved the same pin asks, keeping both versions until the builder chooses', async () => {
    const pinned = sheet(3, { pins: [{ id: 'p1', x: 0, y: 0, label: 'bore' }] });
    const { sheets } = await openBoth(undefined, pinned);
    sheets.movePin('p1', { x: 20, y: 0 });
    api.sheetUpdate.mockRejectedValueOnce(
      conflict({
        currentRevision: 4,
        sheet: sheet(4, { pins: [{ id: 'p1', x: 10, y: 0, label: 'bore' }] }),
      }),
    );
    await sheets.save();
    expect(sheets.conflict?.clashes).toEqual(['pins p1']);
    expect(sheets.current?.pins[0]!.x).toBe(20);
    sheets.takeTheirs();
    expect(sheets.current?.pins[0]!.x).toBe(10);
    expect(sheets.current?.revision).toBe(4);
    expect(sheets.saveState).toBe('saved');
  });
});

describe('a measurement', () => {
  const calibrated = sheet(3, {
    pins: [
      { id: 'pa', x: 100, y: 200, label: '' },
      { id: 'pb', x: 700, y: 200, label: '' },
    ],
  });

  /** The server's answer: sheet revision 4 with the record, model revision 8 with the dimension. */
  function answer(name: string): MeasureAnswer {
    const next = model({ a: '1', b: '2' });
    next.dimensions.push({
      name,
      kind: 'scaled',
      quantity: 'length',
      value: '6.0000 in',
      tol: '0.0300 in',
      sheet: sheetId,
    });
    return {
      sheet: sheet(4, {
        pins: calibrated.pins,
        measurements: [{ id: 'm1', from: 'pa', to: 'pb', dimension: name }],
      }),
      model: { revision: 8, model: next as MeasureAnswer['model']['model'], summary: '' },
      dimension: name,
    };
  }

  it('saves the sheet first, sends both revisions, and takes both answers in as saved', async () => {
    const { sheets, models } = await openBoth(undefined, calibrated);
    sheets.labelPin('pa', 'left');
    api.sheetUpdate.mockImplementationOnce(async (_p, _s, { revision, ...body }) =>
      sheet(revision + 1, body),
    );
    api.sheetMeasure.mockImplementationOnce(async () => {
      const a = answer('gap');
      a.sheet = sheet(5, { ...a.sheet, revision: 5, pins: sheets.current!.pins });
      return a;
    });
    const error = await sheets.measure({ from: 'pa', to: 'pb', name: 'gap', label: '' });
    expect(error).toBe('');
    // The pending pin label went first, so the server measured what the builder sees.
    expect(api.sheetUpdate.mock.invocationCallOrder[0]).toBeLessThan(
      api.sheetMeasure.mock.invocationCallOrder[0]!,
    );
    expect(api.sheetMeasure).toHaveBeenCalledWith(projectId, sheetId, {
      sheetRevision: 4,
      modelRevision: 7,
      from: 'pa',
      to: 'pb',
      dimension: 'gap',
      label: undefined,
      previousName: undefined,
    });
    expect(sheets.current?.revision).toBe(5);
    expect(sheets.current?.measurements.map((m) => m.dimension)).toEqual(['gap']);
    expect(sheets.saveState).toBe('saved');
    expect(models.revision).toBe(8);
    expect(models.dirty).toBe(false);
    expect(models.model.dimensions.find((d) => d.name === 'gap')).toMatchObject({ kind: 'scaled' });
    expect(models.selected).toBe('gap');

    // Undo on the sheet takes the record off (an edit the sheet then saves); redo puts it back.
    sheets.undo();
    expect(sheets.current?.measurements).toEqual([]);
    expect(sheets.saveState).toBe('unsaved');
    sheets.redo();
    expect(sheets.current?.measurements.map((m) => m.dimension)).toEqual(['gap']);
    sheets.close();
  });

  it('keeps unsaved model edits on top of the measured revision', async () => {
    const { sheets, models } = await openBoth(undefined, calibrated);
    models.upsertDimension({ name: 'b', kind: 'stated', quantity: 'length', value: '2 1/2' });
    api.sheetMeasure.mockResolvedValueOnce(answer('gap'));
    expect(await sheets.measure({ from: 'pa', to: 'pb', name: 'gap', label: '' })).toBe('');
    expect(models.revision).toBe(8);
    expect(models.dirty).toBe(true);
    expect(models.model.dimensions.map((d) => [d.name, valueOf(d)])).toEqual([
      ['a', '1'],
      ['b', '2 1/2'],
      ['gap', '6.0000 in'],
    ]);
  });

  it('after a 409 for a newer model, takes it in (nothing unsaved here) and measures once more', async () => {
    const { sheets, models } = await openBoth(undefined, calibrated);
    const newer = model({ a: '1', b: '2', c: '3' });
    api.sheetMeasure
      .mockRejectedValueOnce(conflict({ currentRevision: 8, model: newer }))
      .mockResolvedValueOnce(answer('gap'));
    expect(await sheets.measure({ from: 'pa', to: 'pb', name: 'gap', label: '' })).toBe('');
    expect(api.sheetMeasure).toHaveBeenCalledTimes(2);
    expect(api.sheetMeasure.mock.calls[1]![2].modelRevision).toBe(8);
    expect(models.revision).toBe(8);
  });

  it('after a 409 for a newer model with unsaved edits here, asks instead of measuring', async () => {
    const { sheets, models } = await openBoth(undefined, calibrated);
    models.upsertDimension({ name: 'b', kind: 'stated', quantity: 'length', value: '2 1/2' });
    api.sheetMeasure.mockRejectedValueOnce(
      conflict({ currentRevision: 8, model: model({ a: '1 1/8', b: '2' }) }),
    );
    const error = await sheets.measure({ from: 'pa', to: 'pb', name: 'gap', label: '' });
    expect(error).toMatch(/Someone else saved the model/);
    expect(api.sheetMeasure).toHaveBeenCalledTimes(1);
    expect(models.conflict?.currentRevision).toBe(8);
    expect(models.model.dimensions.map(valueOf)).toEqual(['1', '2 1/2']);
    expect(sheets.current?.measurements).toEqual([]);
  });
});
