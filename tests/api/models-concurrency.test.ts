// Several editors saving one model at the same time, over real sockets in parallel: every save
// is either accepted into the history or refused with 409, and no accepted save is lost.
import type { Server } from 'node:http';
import type { AddressInfo } from 'node:net';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { storedModel, type StoredModel } from '@shared/api';
import { modelSchema, type FairsheetModelInput } from '@shared/engine';
import { upsertMembership } from '../../server/db/projects';
import { createTestApp, type TestApp } from '../helpers/app';
import { answerOf } from '../helpers/contract';
import { HttpClient } from '../helpers/server-process';

const editorCount = 8;
const rounds = 6;

let t: TestApp;
let server: Server;
let owner: HttpClient;
let editors: HttpClient[];
let projectId: string;

beforeAll(async () => {
  t = await createTestApp();
  server = await new Promise<Server>((resolve) => {
    const s = t.app.listen(0, '127.0.0.1', () => resolve(s));
  });
  const base = `http://127.0.0.1:${(server.address() as AddressInfo).port}`;
  owner = new HttpClient(base);
  await owner.register('concurrent.owner@example.com');
  const created = await owner.request<{ id: string }>('POST', '/api/projects', {
    name: 'Concurrent saves',
    displayUnit: 'in',
  });
  projectId = created.body.id;
  editors = [];
  for (let i = 0; i < editorCount; i++) {
    const c = new HttpClient(base);
    const user = await c.register(`concurrent.editor${i}@example.com`);
    await upsertMembership(t.database.db, projectId, user.id, 'editor');
    editors.push(c);
  }
});

afterAll(async () => {
  server?.closeAllConnections();
  await new Promise((resolve) => server?.close(resolve));
  await t?.close();
});

const url = (path: string) => `/api/projects/${projectId}${path}`;

async function current(c: HttpClient): Promise<StoredModel> {
  const res = await c.request<StoredModel>('GET', url('/model'));
  expect(res.status).toBe(200);
  return answerOf(storedModel, res);
}

/** The model with one more stated dimension, named after the editor and the round. */
function withDimension(model: FairsheetModelInput, name: string, value: number) {
  const next = structuredClone(model);
  next.dimensions = [...next.dimensions, { name, kind: 'stated', value, tol: 0.005 }];
  return next;
}

async function historyRevisions(): Promise<number[]> {
  const res = await owner.request<{ entries: { revision: number }[] }>('GET', url('/history'));
  return res.body.entries.map((e) => e.revision).sort((a, b) => a - b);
}

const range = (from: number, to: number) =>
  Array.from({ length: to - from + 1 }, (_, i) => from + i);

describe('concurrent saves of one model', () => {
  it(`${editorCount} editors saving in a loop (409 → re-read → retry): every accepted save is in the history, none is lost`, async () => {
    const startRevision = (await current(owner)).revision;
    const attempts: {
      editor: number;
      base: number;
      status: number;
      revision?: number;
      currentRevision?: number;
      model: FairsheetModelInput;
    }[] = [];

    await Promise.all(
      editors.map(async (c, i) => {
        // The revision this editor last saw, and the model it holds (as it wrote it, or as read).
        let seen: { revision: number; model: FairsheetModelInput } = await current(c);
        for (let round = 0; round < rounds;) {
          const model = withDimension(seen.model, `e${i}_r${round}`, 1 + i + round / 100);
          const res = await c.request<{ revision?: number; error?: { details?: unknown } }>(
            'PUT',
            url('/model'),
            { revision: seen.revision, model },
          );
          const details = res.body.error?.details as { currentRevision?: number } | undefined;
          attempts.push({
            editor: i,
            base: seen.revision,
            status: res.status,
            revision: res.body.revision,
            currentRevision: details?.currentRevision,
            model,
          });
          if (res.status === 200) {
            round += 1;
            seen = { revision: res.body.revision!, model };
          } else if (res.status === 409) {
            seen = await current(c);
          } else {
            return; // recorded, and asserted on below
          }
        }
      }),
    );

    // Nothing but 200 and 409: no 500, no lock timeout, no lost connection.
    expect(attempts.filter((a) => a.status !== 200 && a.status !== 409)).toEqual([]);
    const accepted = attempts.filter((a) => a.status === 200);
    const refused = attempts.filter((a) => a.status === 409);
    expect(accepted).toHaveLength(editorCount * rounds);
    // The editors really raced: some saves collided (the burst below forces the collision).
    expect(refused.length).toBeGreaterThan(0);

    // Each accepted save took the revision after the one it was based on, and no two took the same.
    for (const a of accepted) expect(a.revision).toBe(a.base + 1);
    const end = startRevision + accepted.length;
    expect(accepted.map((a) => a.revision!).sort((x, y) => x - y)).toEqual(
      range(startRevision + 1, end),
    );
    // Each refusal was for a revision somebody else had taken, and named a newer one.
    const taken = new Set(accepted.map((a) => a.revision));
    for (const r of refused) {
      expect(taken.has(r.base + 1)).toBe(true);
      expect(r.currentRevision).toBeGreaterThan(r.base);
    }

    // The history holds every revision, each with the content its save sent.
    expect(await historyRevisions()).toEqual(range(0, end));
    for (const a of accepted) {
      const entry = await owner.request<{ model: unknown }>('GET', url(`/history/${a.revision}`));
      expect(entry.status).toBe(200);
      expect(entry.body.model).toEqual(modelSchema.parse(a.model));
    }
    // And the current model has every editor's every dimension: zero lost updates.
    const last = await current(owner);
    expect(last.revision).toBe(end);
    const names = new Set(last.model.dimensions.map((d) => d.name));
    for (const a of accepted) {
      const added = a.model.dimensions.at(-1)!.name;
      expect(names.has(added)).toBe(true);
    }
    expect(names.size).toBe(editorCount * rounds);

    // The stored row and the history agree.
    const { rows } = await t.database.pool.query(
      `select m.revision, (m.model = r.model) as same
         from project_models m join model_revisions r
           on r.project_id = m.project_id and r.revision = m.revision
        where m.project_id = $1`,
      [projectId],
    );
    expect(rows).toEqual([{ revision: end, same: true }]);
  });

  it(`${editorCount} saves on the same revision at the same moment: exactly one is accepted`, async () => {
    const before = await current(owner);
    const results = await Promise.all(
      editors.map((c, i) =>
        c.request<{ revision?: number }>('PUT', url('/model'), {
          revision: before.revision,
          model: withDimension(before.model, `burst_${i}`, 10 + i),
        }),
      ),
    );
    const statuses = results.map((r) => r.status).sort();
    expect(statuses).toEqual([200, ...Array<number>(editorCount - 1).fill(409)]);
    const winner = results.findIndex((r) => r.status === 200);
    expect(results[winner]!.body.revision).toBe(before.revision + 1);
    const after = await current(owner);
    expect(after.revision).toBe(before.revision + 1);
    expect(after.model.dimensions.at(-1)!.name).toBe(`burst_${winner}`);
    expect(after.model.dimensions.filter((d) => d.name.startsWith('burst_'))).toHaveLength(1);
    expect(await historyRevisions()).toEqual(range(0, before.revision + 1));
  });
});
