import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { upsertMembership } from '../../server/db/projects';
import { createTestApp, TestClient, type TestApp } from '../helpers/app';

let t: TestApp;
let owner: TestClient;
let editor: TestClient;
let viewer: TestClient;
let stranger: TestClient;
let projectId: string;

// A chain that derives the slot: overall = boss + slot + web (inch model).
const chain = {
  format: 'fairsheet.model',
  version: 1,
  units: 'in',
  dimensions: [
    { name: 'overall', kind: 'stated', value: '6 1/4', tol: '0.005' },
    { name: 'boss', kind: 'stated', value: '0.750', tol: '0.002' },
    { name: 'web', kind: 'stated', value: '1 1/2', tol: '0.003' },
    { name: 'slot', kind: 'derived' },
  ],
  relations: [{ id: 'r1', expr: 'overall = boss + slot + web' }],
};

beforeAll(async () => {
  t = await createTestApp();
  owner = new TestClient(t.app);
  editor = new TestClient(t.app);
  viewer = new TestClient(t.app);
  stranger = new TestClient(t.app);
  await owner.register('m.owner@example.com');
  const e = await editor.register('m.editor@example.com');
  const v = await viewer.register('m.viewer@example.com');
  await stranger.register('m.stranger@example.com');
  projectId = (
    await owner.post('/api/projects', { name: 'Model tests', displayUnit: 'in' }).expect(201)
  ).body.id;
  await upsertMembership(t.database.db, projectId, e.id, 'editor');
  await upsertMembership(t.database.db, projectId, v.id, 'viewer');
});
afterAll(() => t.close());

const url = (path = '') => `/api/projects/${projectId}${path}`;

describe('the model and its revisions', () => {
  it('a new project has an empty model at revision 0 in its display unit', async () => {
    const res = await viewer.get(url('/model')).expect(200);
    expect(res.body.revision).toBe(0);
    expect(res.body.model).toMatchObject({
      format: 'fairsheet.model',
      version: 1,
      units: 'in',
      dimensions: [],
    });
    expect(res.body.result.status).toBe('solved');
  });

  it('PUT saves, answers the next revision with the server solve, and GET returns it', async () => {
    const res = await owner.put(url('/model'), { revision: 0, model: chain }).expect(200);
    expect(res.body.revision).toBe(1);
    // 6.25 − 0.75 − 1.5 = 4.0; worst case 0.005 + 0.002 + 0.003 = 0.010 (arithmetic of the chain).
    expect(res.body.result.values.slot.value).toBeCloseTo(4.0, 9);
    expect(res.body.result.values.slot.worstCase).toBeCloseTo(0.01, 9);
    // The save answers values with their stack-up but not the traces the browser works out.
    expect(res.body.result.values.slot.trace).toBeUndefined();
    expect(res.body.result.values.slot.contributors).toBeUndefined();
    const got = await viewer.get(url('/model')).expect(200);
    expect(got.body.revision).toBe(1);
    expect(got.body.model.dimensions).toHaveLength(4);
    expect(got.body.updatedBy).toBe('Test Builder');
    // Reading answers the server's verdict; the browser solves for the values itself.
    expect(got.body.result).toMatchObject({ status: 'solved', contradictions: [], needs: 0 });
    expect(got.body.result.values).toBeUndefined();
  });

  it('a save based on a stale revision gets 409 with the current revision, and changes nothing', async () => {
    const current = (await owner.get(url('/model'))).body;
    const mine = structuredClone(current.model);
    mine.dimensions[0].value = '6 3/8';
    await editor.put(url('/model'), { revision: current.revision, model: mine }).expect(200);

    const theirs = structuredClone(current.model);
    theirs.dimensions[1].value = '0.800';
    const res = await owner.put(url('/model'), { revision: current.revision, model: theirs });
    expect(res.status).toBe(409);
    expect(res.body.error.code).toBe('conflict');
    expect(res.body.error.details.currentRevision).toBe(current.revision + 1);
    expect(res.body.error.details.model.dimensions[0].value).toBe('6 3/8');
    const after = (await owner.get(url('/model'))).body;
    expect(after.model.dimensions[1].value).toBe('0.750');
  });

  it('an invalid model is refused with 400 naming the fields, and changes nothing', async () => {
    const before = (await owner.get(url('/model'))).body;
    const bad = { ...chain, dimensions: [{ name: '1st', kind: 'stated' }] };
    const res = await owner.put(url('/model'), { revision: before.revision, model: bad });
    expect(res.status).toBe(400);
    const paths = res.body.error.details.fields.map((f: { path: string }) => f.path);
    expect(paths.some((p: string) => p.startsWith('model.dimensions.0'))).toBe(true);
    expect((await owner.get(url('/model'))).body.revision).toBe(before.revision);
  });

  it('text the database cannot store (a NUL, half a surrogate pair) is refused with 400 naming the field, not a 500', async () => {
    const before = (await owner.get(url('/model'))).body;
    for (const [text, path] of [
      ['nul\u0000here', 'model.dimensions.0.note'],
      ['lone \ud800 half', 'model.dimensions.0.note'],
      ['\udc00', 'model.dimensions.0.note'],
    ]) {
      const model = structuredClone(before.model);
      model.dimensions[0].note = text;
      const res = await owner.put(url('/model'), { revision: before.revision, model });
      expect(res.status).toBe(400);
      expect(res.body.error.details.fields).toEqual([
        { path, message: expect.stringMatching(/NUL character or half a surrogate pair/) },
      ]);
    }
    const note = await owner.put(url('/model'), {
      revision: before.revision,
      model: before.model,
      note: 'a\u0000b',
    });
    expect(note.status).toBe(400);
    expect(note.body.error.message).toBe('Please check: note.');
    // A whole pair (an emoji) is fine.
    const model = structuredClone(before.model);
    model.dimensions[0].note = 'checked 👍';
    const ok = await owner.put(url('/model'), { revision: before.revision, model }).expect(200);
    model.dimensions[0].note = before.model.dimensions[0].note;
    await owner.put(url('/model'), { revision: ok.body.revision, model }).expect(200);
  });

  it('a model with a broken relation still saves, and its result names the error', async () => {
    const before = (await owner.get(url('/model'))).body;
    const model = structuredClone(before.model);
    model.relations.push({ id: 'r2', expr: 'overall = boss + nosuch' });
    const res = await owner.put(url('/model'), { revision: before.revision, model }).expect(200);
    expect(res.body.result.status).toBe('invalid');
    expect(JSON.stringify(res.body.result.errors)).toMatch(/nosuch/);
    model.relations.pop();
    await owner.put(url('/model'), { revision: res.body.revision, model }).expect(200);
  });

  it('GET /model answers an ETag; an unchanged model revalidates with 304, a save changes it', async () => {
    const first = await viewer.get(url('/model')).expect(200);
    const etag = first.headers.etag!;
    expect(etag).toMatch(/^"m\d+-/);
    await viewer.get(url('/model')).set('If-None-Match', etag).expect(304);
    const model = structuredClone(first.body.model);
    model.dimensions[0].label = 'Overall, from the title block';
    await owner.put(url('/model'), { revision: first.body.revision, model }).expect(200);
    const after = await viewer.get(url('/model')).set('If-None-Match', etag).expect(200);
    expect(after.headers.etag).not.toBe(etag);
    expect(after.body.model.dimensions[0].label).toBe('Overall, from the title block');
    expect(after.body.revision).toBe(first.body.revision + 1);
  });

  it('GET /model answers brotli or gzip to a client that takes them and plain JSON to one that does not, all the same content', async () => {
    const plain = await viewer.get(url('/model')).set('Accept-Encoding', 'identity').expect(200);
    expect(plain.headers['content-encoding']).toBeUndefined();
    expect(plain.headers.vary).toMatch(/Accept-Encoding/);
    for (const [asked, expected] of [
      ['gzip, deflate, br', 'br'],
      ['gzip, deflate', 'gzip'],
    ] as const) {
      const packed = await viewer.get(url('/model')).set('Accept-Encoding', asked).expect(200);
      expect(packed.headers['content-encoding']).toBe(expected);
      // supertest unpacks both itself; the bytes on the wire are the Content-Length.
      expect(packed.body).toEqual(plain.body);
      expect(Number(packed.headers['content-length'])).toBeLessThan(
        Number(plain.headers['content-length']),
      );
    }
  });

  it('viewers cannot save (403) and strangers see nothing (404)', async () => {
    const current = (await owner.get(url('/model'))).body;
    expect(
      (await viewer.put(url('/model'), { revision: current.revision, model: chain })).status,
    ).toBe(403);
    expect((await stranger.get(url('/model'))).status).toBe(404);
    expect((await stranger.get(url('/history'))).status).toBe(404);
  });
});

describe('history, compare and restore', () => {
  it('every save is in the history with who and a summary', async () => {
    const res = await viewer.get(url('/history')).expect(200);
    const entries = res.body.entries as {
      revision: number;
      summary: string;
      user: { name: string } | null;
    }[];
    expect(entries[0]!.revision).toBe((await owner.get(url('/model'))).body.revision);
    expect(entries.at(-1)!.revision).toBe(0);
    const second = entries.find((e) => e.revision === 2)!;
    expect(second.summary).toContain('overall value 6 1/4 → 6 3/8');
  });

  it('GET /history/:revision answers that revision with its model and diff', async () => {
    const res = await viewer.get(url('/history/1')).expect(200);
    expect(res.body.model.dimensions.map((d: { name: string }) => d.name)).toEqual([
      'overall',
      'boss',
      'web',
      'slot',
    ]);
    expect(res.body.diff.dimensions.every((d: { change: string }) => d.change === 'added')).toBe(
      true,
    );
    expect((await viewer.get(url('/history/999'))).status).toBe(404);
  });

  it('compare names the changed value and the derived value that moved', async () => {
    const res = await viewer.get(url('/compare?from=1&to=2')).expect(200);
    expect(res.body.diff.dimensions).toHaveLength(1);
    expect(res.body.diff.dimensions[0]).toMatchObject({ key: 'overall', change: 'changed' });
    const slot = res.body.moved.find((m: { name: string }) => m.name === 'slot');
    // 6 3/8 − 6 1/4 = 1/8 in more slot.
    expect(slot.delta).toBeCloseTo(0.125, 9);
  });

  it('compare refuses a missing revision number with 400', async () => {
    expect((await viewer.get(url('/compare?from=1'))).status).toBe(400);
  });

  it('restore brings back an old model as a new revision', async () => {
    const current = (await owner.get(url('/model'))).body;
    const res = await owner
      .post(url('/history/1/restore'), { revision: current.revision })
      .expect(200);
    expect(res.body.revision).toBe(current.revision + 1);
    expect(res.body.summary).toMatch(/restored revision 1/);
    const now = (await owner.get(url('/model'))).body;
    expect(now.model.dimensions[0].value).toBe('6 1/4');
    expect(res.body.result.values.slot.value).toBeCloseTo(4.0, 9);
  });

  it('export answers the model file as a download', async () => {
    const res = await viewer.get(url('/model/export')).expect(200);
    expect(res.headers['content-disposition']).toMatch(
      /attachment; filename="?Model-tests-r\d+\.json"?/,
    );
    const file = JSON.parse(res.text);
    expect(file.format).toBe('fairsheet.model');
  });
});

describe('saving an unchanged model', () => {
  it('records no history and no activity after a round trip through PostgreSQL', async () => {
    const before = (await owner.get(url('/model'))).body;
    const model = structuredClone(before.model);
    // Nested objects are where jsonb's own key order shows: the pattern is written here in
    // the schema's order (type, count, pcd, startDeg) and read back shortest key first.
    model.parts = [{ id: 'flange', name: 'Flange' }];
    model.features = [
      {
        id: 'studs',
        part: 'flange',
        kind: 'hole',
        x: 0,
        y: 0,
        pattern: { type: 'circle', count: 4, pcd: 'boss', startDeg: 45 },
      },
    ];
    const saved = await owner.put(url('/model'), { revision: before.revision, model }).expect(200);
    const stored = (await owner.get(url('/model'))).body;
    expect(stored.revision).toBe(saved.body.revision);
    expect(Object.keys(stored.model.features[0].pattern)).not.toEqual(
      Object.keys(model.features[0].pattern),
    );
    const history = (await viewer.get(url('/history')).expect(200)).body.entries.length;
    const activity = (await viewer.get(url('/activity?kind=save')).expect(200)).body.entries.length;

    const again = await owner
      .put(url('/model'), { revision: stored.revision, model: stored.model })
      .expect(200);
    expect(again.body).toMatchObject({ revision: stored.revision, summary: 'no change' });
    expect((await owner.get(url('/model'))).body.revision).toBe(stored.revision);
    expect((await viewer.get(url('/history'))).body.entries).toHaveLength(history);
    expect((await viewer.get(url('/activity?kind=save'))).body.entries).toHaveLength(activity);
  });
});
