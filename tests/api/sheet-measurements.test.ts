import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { upsertMembership } from '../../server/db/projects';
import { createTestApp, TestClient, type TestApp } from '../helpers/app';
import { makePng } from '../helpers/sheet-files';

let t: TestApp;
let owner: TestClient;
let editor: TestClient;
let checker: TestClient;
let viewer: TestClient;
let stranger: TestClient;
let projectId: string;
let sheetId: string;
let bareSheetId: string;

const url = (p = '') => `/api/projects/${projectId}${p}`;
const measureUrl = (id = sheetId) => url(`/sheets/${id}/measurements`);

/** Two-point calibration: 1,000 px between the picks is 10 in (254 mm), so 0.01 in per px. */
const calibration = {
  method: 'two-point',
  reference: { a: { x: 100, y: 100 }, b: { x: 1100, y: 100 }, length: '10', lengthMm: 254 },
};
const pins = [
  { id: 'pa', x: 100, y: 200, label: 'left' },
  { id: 'pb', x: 700, y: 200, label: 'right' },
  { id: 'pc', x: 700, y: 500, label: 'below' },
];

async function state(id = sheetId) {
  const [sheet, model] = await Promise.all([
    owner.get(url(`/sheets/${id}`)).expect(200),
    owner.get(url('/model')).expect(200),
  ]);
  return { sheet: sheet.body, model: model.body };
}

beforeAll(async () => {
  t = await createTestApp();
  const client = () => new TestClient(t.app);
  [owner, editor, checker, viewer, stranger] = [client(), client(), client(), client(), client()];
  await owner.register('m.owner@example.com');
  const e = await editor.register('m.editor@example.com');
  const c = await checker.register('m.checker@example.com');
  const v = await viewer.register('m.viewer@example.com');
  await stranger.register('m.stranger@example.com');
  projectId = (
    await owner.post('/api/projects', { name: 'Measure tests', displayUnit: 'in' }).expect(201)
  ).body.id;
  await upsertMembership(t.database.db, projectId, e.id, 'editor');
  await upsertMembership(t.database.db, projectId, c.id, 'checker');
  await upsertMembership(t.database.db, projectId, v.id, 'viewer');
  const uploaded = await owner.agent
    .post(url('/sheets'))
    .set('X-CSRF-Token', owner.csrf)
    .attach('file', makePng(1200, 600), { filename: 'plate.png' })
    .attach('file', makePng(40, 30, 7), { filename: 'bare.png' })
    .expect(201);
  [sheetId, bareSheetId] = uploaded.body.sheets.map((s: { id: string }) => s.id);
  await owner.patch(url(`/sheets/${sheetId}`), { revision: 0, calibration, pins }).expect(200);
  await owner
    .patch(url(`/sheets/${bareSheetId}`), { revision: 0, pins: pins.slice(0, 2) })
    .expect(200);
});
afterAll(() => t.close());

describe('POST /api/projects/:projectId/sheets/:sheetId/measurements', () => {
  it('measures on the server and writes the sheet record and a model revision together', async () => {
    const before = await state();
    const res = await editor
      .post(measureUrl(), {
        sheetRevision: before.sheet.revision,
        modelRevision: before.model.revision,
        from: 'pa',
        to: 'pb',
        dimension: 'gap',
        label: 'left to right',
      })
      .expect(200);
    // 600 px at 0.01 in per px (the calibration above) is 6 in.
    const dim = res.body.model.model.dimensions.find((d: { name: string }) => d.name === 'gap');
    expect(dim).toMatchObject({
      kind: 'scaled',
      value: '6.0000 in',
      sheet: sheetId,
      label: 'left to right',
    });
    // The engine's floor for a scaled length: 0.5 % of it (calibrate/measure.ts, measureBetweenPins).
    expect(Number.parseFloat(dim.tol)).toBeGreaterThanOrEqual(6 * 0.005 - 1e-9);
    expect(res.body.sheet.revision).toBe(before.sheet.revision + 1);
    expect(res.body.sheet.measurements).toEqual([
      { id: expect.any(String), from: 'pa', to: 'pb', dimension: 'gap' },
    ]);
    expect(res.body.model.revision).toBe(before.model.revision + 1);

    const after = await state();
    expect(after.sheet.revision).toBe(res.body.sheet.revision);
    expect(after.sheet.measurements).toEqual(res.body.sheet.measurements);
    expect(after.model.revision).toBe(res.body.model.revision);
    expect(after.model.model.dimensions).toContainEqual(dim);

    const history = await owner.get(url('/history')).expect(200);
    expect(history.body.entries[0]).toMatchObject({
      revision: res.body.model.revision,
      summary: 'gap measured on “plate” (added gap)',
    });
    const activity = await owner.get(url('/activity')).expect(200);
    expect(activity.body.entries[0].summary).toBe(
      `saved revision ${res.body.model.revision}: gap measured on “plate” (added gap)`,
    );
  });

  it('a re-measure under a new name renames the dimension in the relations and keeps the record', async () => {
    const before = await state();
    const model = structuredClone(before.model.model);
    model.dimensions.push({ name: 'total', kind: 'derived', quantity: 'length' });
    model.relations.push({ id: 'r1', expr: 'total = gap * 2', enabled: true });
    const saved = await owner
      .put(url('/model'), { revision: before.model.revision, model })
      .expect(200);
    const record = before.sheet.measurements[0];
    const res = await editor
      .post(measureUrl(), {
        sheetRevision: before.sheet.revision,
        modelRevision: saved.body.revision,
        from: 'pa',
        to: 'pc',
        dimension: 'span',
        previousName: 'gap',
      })
      .expect(200);
    const names = res.body.model.model.dimensions.map((d: { name: string }) => d.name);
    expect(names).toContain('span');
    expect(names).not.toContain('gap');
    expect(res.body.model.model.relations[0].expr).toBe('total = span * 2');
    // √(600² + 300²) px = 670.82 px at 0.01 in per px.
    const span = res.body.model.model.dimensions.find((d: { name: string }) => d.name === 'span');
    expect(Number.parseFloat(span.value)).toBeCloseTo(Math.hypot(6, 3), 4);
    expect(span.label).toBe('left to right');
    expect(res.body.sheet.measurements).toEqual([
      { id: record.id, from: 'pa', to: 'pc', dimension: 'span' },
    ]);
  });

  it('a stale model revision answers 409 with the current model, and neither is written', async () => {
    const before = await state();
    const res = await editor.post(measureUrl(), {
      sheetRevision: before.sheet.revision,
      modelRevision: before.model.revision - 1,
      from: 'pb',
      to: 'pc',
      dimension: 'drop',
    });
    expect(res.status).toBe(409);
    expect(res.body.error.code).toBe('conflict');
    expect(res.body.error.details.currentRevision).toBe(before.model.revision);
    expect(res.body.error.details.model.dimensions.map((d: { name: string }) => d.name)).toEqual(
      before.model.model.dimensions.map((d: { name: string }) => d.name),
    );
    expect(await state()).toEqual(before);
  });

  it('a stale sheet revision answers 409 with the current sheet, and neither is written', async () => {
    const before = await state();
    const res = await editor.post(measureUrl(), {
      sheetRevision: before.sheet.revision - 1,
      modelRevision: before.model.revision,
      from: 'pb',
      to: 'pc',
      dimension: 'drop',
    });
    expect(res.status).toBe(409);
    expect(res.body.error.details.currentRevision).toBe(before.sheet.revision);
    expect(res.body.error.details.sheet.measurements).toEqual(before.sheet.measurements);
    expect(await state()).toEqual(before);
  });

  it('refuses a name that is not a name, or one a stated dimension holds, with 400 on the field', async () => {
    const before = await state();
    const body = {
      sheetRevision: before.sheet.revision,
      modelRevision: before.model.revision,
      from: 'pb',
      to: 'pc',
    };
    const bad = await editor.post(measureUrl(), { ...body, dimension: '1bad name' });
    expect(bad.status).toBe(400);
    expect(bad.body.error.details.fields[0]).toMatchObject({ path: 'dimension' });
    expect(bad.body.error.message).toMatch(/a letter or _/);
    const model = structuredClone(before.model.model);
    model.dimensions.push({ name: 'given', kind: 'stated', value: '2', quantity: 'length' });
    const saved = await owner
      .put(url('/model'), { revision: before.model.revision, model })
      .expect(200);
    const taken = await editor.post(measureUrl(), {
      ...body,
      modelRevision: saved.body.revision,
      dimension: 'given',
    });
    expect(taken.status).toBe(400);
    expect(taken.body.error.message).toBe('There is already a stated dimension named given');
    expect((await state()).sheet).toEqual(before.sheet);
  });

  it('refuses a pin that is not on the sheet with 400, and an uncalibrated sheet with 422', async () => {
    const before = await state();
    const missing = await editor.post(measureUrl(), {
      sheetRevision: before.sheet.revision,
      modelRevision: before.model.revision,
      from: 'pa',
      to: 'nowhere',
      dimension: 'lost',
    });
    expect(missing.status).toBe(400);
    expect(missing.body.error.details.pin).toBe('nowhere');
    const bare = await state(bareSheetId);
    const uncalibrated = await editor.post(measureUrl(bareSheetId), {
      sheetRevision: bare.sheet.revision,
      modelRevision: bare.model.revision,
      from: 'pa',
      to: 'pb',
      dimension: 'lost',
    });
    expect(uncalibrated.status).toBe(422);
    expect(uncalibrated.body.error.message).toMatch(/^Calibrate this sheet first/);
    expect(await state(bareSheetId)).toEqual(bare);
  });

  it('answers 403 to a viewer and a checker and 404 to a non-member, writing nothing', async () => {
    const before = await state();
    const body = {
      sheetRevision: before.sheet.revision,
      modelRevision: before.model.revision,
      from: 'pb',
      to: 'pc',
      dimension: 'drop',
    };
    expect((await viewer.post(measureUrl(), body)).status).toBe(403);
    expect((await checker.post(measureUrl(), body)).status).toBe(403);
    expect((await stranger.post(measureUrl(), body)).status).toBe(404);
    expect(await state()).toEqual(before);
  });
});
