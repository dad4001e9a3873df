// The app killed outright (SIGKILL: no shutdown code runs) in the middle of a stream of saves,
// uploads and deletions, then started again on the same database and storage folder: what was
// acknowledged is all there, and nothing is half-written.
import { createHash, randomFillSync } from 'node:crypto';
import { existsSync, mkdtempSync, readdirSync, readFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { isDeepStrictEqual } from 'node:util';
import pg from 'pg';
import { PNG } from 'pngjs';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { modelSchema, type FairsheetModelInput } from '@shared/engine';
import { createTestDatabase } from '../helpers/app';
import { freePort } from '../helpers/net';
import {
  HttpClient,
  killServerProcesses,
  serverEnv,
  startServerProcess,
  waitFor,
  type ServerProcess,
} from '../helpers/server-process';

let database: Awaited<ReturnType<typeof createTestDatabase>>;
let dataDir: string;
let env: Record<string, string>;
let db: pg.Client;

beforeAll(async () => {
  database = await createTestDatabase();
  dataDir = mkdtempSync(path.join(tmpdir(), 'fairsheet-crash-'));
  env = await serverEnv(database.url, dataDir);
  db = new pg.Client({ connectionString: database.url });
  await db.connect();
});
afterAll(async () => {
  await killServerProcesses();
  await db?.end();
  await database?.drop();
  if (dataDir) rmSync(dataDir, { recursive: true, force: true });
});

const sha256 = (bytes: Buffer) => createHash('sha256').update(bytes).digest('hex');

/** A real PNG of noise, stored without compression: about 1.5 MB that no two calls share. */
function noisePng(): Buffer {
  const png = new PNG({ width: 640, height: 600 });
  randomFillSync(png.data);
  return PNG.sync.write(png, { deflateLevel: 0 });
}

/** A multipart body with one PNG in the field "file", as the browser sends an upload. */
function pngForm(bytes: Buffer, name: string): FormData {
  const form = new FormData();
  form.append('file', new Blob([new Uint8Array(bytes)], { type: 'image/png' }), name);
  return form;
}

type Outcome = 'acknowledged' | 'refused' | 'unknown';

interface Save {
  model: FairsheetModelInput;
  marker: string;
  outcome: Outcome;
  revision?: number;
}
interface Upload {
  bytes: Buffer;
  sha256: string;
  outcome: Outcome;
  sheetIds: string[];
  deleted?: Outcome;
}

/** Saves, uploads and deletions from several clients at once, until `stop()`. */
function stream(client: HttpClient, projectId: string, tag: string) {
  const saves: Save[] = [];
  const uploads: Upload[] = [];
  const statuses: number[] = [];
  let stopped = false;
  const url = (p: string) => `/api/projects/${projectId}${p}`;

  const saver = async (i: number) => {
    for (let n = 0; !stopped; n++) {
      const read = await client
        .request<{ revision: number; model: FairsheetModelInput }>('GET', url('/model'))
        .catch(() => undefined);
      if (read?.status !== 200) continue;
      const marker = `${tag}_s${i}_${n}`;
      const model = structuredClone(read.body.model);
      model.dimensions = [...model.dimensions, { name: marker, kind: 'stated', value: n + 1 }];
      const save: Save = { model, marker, outcome: 'unknown' };
      saves.push(save);
      const res = await client
        .request<{ revision: number }>('PUT', url('/model'), {
          revision: read.body.revision,
          model,
        })
        .catch(() => undefined);
      if (!res) continue;
      statuses.push(res.status);
      save.outcome = res.status === 200 ? 'acknowledged' : 'refused';
      save.revision = res.body.revision;
    }
  };

  const uploader = async (i: number, deleteAfter: boolean) => {
    for (let n = 0; !stopped; n++) {
      const bytes = noisePng();
      const upload: Upload = { bytes, sha256: sha256(bytes), outcome: 'unknown', sheetIds: [] };
      uploads.push(upload);
      const form = pngForm(bytes, `${tag}-u${i}-${n}.png`);
      const res = await client
        .request<{ sheets: { id: string }[] }>('POST', url('/sheets'), form)
        .catch(() => undefined);
      if (!res) continue;
      statuses.push(res.status);
      upload.outcome = res.status === 201 ? 'acknowledged' : 'refused';
      if (res.status !== 201) continue;
      upload.sheetIds = res.body.sheets.map((s) => s.id);
      if (!deleteAfter) continue;
      upload.deleted = 'unknown';
      const gone = await client
        .request('DELETE', url(`/sheets/${upload.sheetIds[0]}`))
        .catch(() => undefined);
      if (gone) upload.deleted = gone.status === 204 ? 'acknowledged' : 'refused';
    }
  };

  const running = Promise.all([
    saver(0),
    saver(1),
    saver(2),
    uploader(0, false),
    uploader(1, false),
    uploader(2, true),
  ]);
  return {
    saves,
    uploads,
    statuses,
    async stop() {
      stopped = true;
      await running;
    },
  };
}

const temporaryFiles = () => {
  const folder = path.join(env.UPLOAD_DIR!, '.tmp');
  return existsSync(folder) ? readdirSync(folder) : [];
};

/** Resolves as soon as a new file is in the storage's temporary folder (polled every 2 ms). */
async function blobBeingWritten(before: string[], timeoutMs = 60_000) {
  const deadline = Date.now() + timeoutMs;
  while (!temporaryFiles().some((name) => !before.includes(name))) {
    if (Date.now() > deadline) throw new Error('no blob was being written');
    await new Promise((r) => setTimeout(r, 2));
  }
}

/** Every file of the storage folder outside its temporary folder, as [name, bytes]. */
function storedBlobs(): [string, Buffer][] {
  const root = env.UPLOAD_DIR!;
  if (!existsSync(root)) return [];
  const found: [string, Buffer][] = [];
  for (const fan of readdirSync(root)) {
    if (fan === '.tmp') continue;
    for (const name of readdirSync(path.join(root, fan))) {
      found.push([name, readFileSync(path.join(root, fan, name))]);
    }
  }
  return found;
}

async function checkConsistent(
  client: HttpClient,
  projectId: string,
  s: ReturnType<typeof stream>,
) {
  const url = (p: string) => `/api/projects/${projectId}${p}`;

  // Model and history: one history row per revision 0…N, the last one the stored model.
  const stored = (
    await db.query('select revision, model from project_models where project_id = $1', [projectId])
  ).rows[0] as { revision: number; model: unknown };
  const history = (
    await db.query(
      'select revision, model from model_revisions where project_id = $1 order by revision',
      [projectId],
    )
  ).rows as { revision: number; model: FairsheetModelInput }[];
  expect(history.map((r) => r.revision)).toEqual(
    Array.from({ length: stored.revision + 1 }, (_, i) => i),
  );
  expect(history.at(-1)!.model).toEqual(stored.model);

  // Every acknowledged save is its revision, with its content.
  const acknowledged = s.saves.filter((x) => x.outcome === 'acknowledged');
  expect(acknowledged.length).toBeGreaterThan(0);
  for (const save of acknowledged) {
    const entry = await client.request<{ model: unknown }>('GET', url(`/history/${save.revision}`));
    expect(entry.status).toBe(200);
    expect(entry.body.model).toEqual(modelSchema.parse(save.model));
  }
  // A save cut off by the kill either went in whole (a revision is exactly its model) or
  // left no trace (its dimension is in no revision).
  for (const save of s.saves.filter((x) => x.outcome === 'unknown')) {
    const sent = JSON.parse(JSON.stringify(modelSchema.parse(save.model)));
    const exact = history.some((r) => isDeepStrictEqual(r.model, sent));
    const traces = history.filter((r) => r.model.dimensions.some((d) => d.name === save.marker));
    if (!exact) expect(traces).toEqual([]);
  }

  // Every acknowledged upload not acknowledged as deleted is a sheet whose file reads back whole.
  const listed = await client.request<{ sheets: { id: string; file: { sha256: string } }[] }>(
    'GET',
    url('/sheets'),
  );
  expect(listed.status).toBe(200);
  const sheetIds = new Set(listed.body.sheets.map((x) => x.id));
  for (const upload of s.uploads.filter((u) => u.outcome === 'acknowledged')) {
    if (upload.deleted === 'acknowledged') {
      expect(sheetIds.has(upload.sheetIds[0]!)).toBe(false);
      continue;
    }
    if (upload.deleted === 'unknown') continue;
    expect(sheetIds.has(upload.sheetIds[0]!)).toBe(true);
    const file = await fetch(`${client.baseUrl}${url(`/sheets/${upload.sheetIds[0]}/file`)}`, {
      headers: { Cookie: client.cookie },
    });
    expect(file.status).toBe(200);
    expect(Buffer.from(await file.arrayBuffer()).equals(upload.bytes)).toBe(true);
  }

  // Every sheet's file has its row and its blob; every blob is whole (its bytes hash to its name).
  const sheetFiles = (
    await db.query(
      `select s.file_sha256 as sha256, f.sha256 is not null as has_row
         from sheets s left join files f on f.sha256 = s.file_sha256`,
    )
  ).rows as { sha256: string; has_row: boolean }[];
  const blobs = new Map(storedBlobs());
  for (const f of sheetFiles) {
    expect(f.has_row).toBe(true);
    expect(blobs.has(f.sha256)).toBe(true);
  }
  for (const [name, bytes] of blobs) expect(sha256(bytes)).toBe(name);
  // After the start-up sweep, every file row is used by a sheet and has its blob.
  const fileRows = (await db.query('select sha256 from files')).rows as { sha256: string }[];
  const used = new Set(sheetFiles.map((f) => f.sha256));
  for (const { sha256: key } of fileRows) {
    expect(used.has(key)).toBe(true);
    expect(blobs.has(key)).toBe(true);
  }
  // A blob the kill caught half-written stays in the temporary folder under a name no storage
  // key can reach (keys are 64 hex digits), and no sheet lists it.
  for (const name of temporaryFiles()) expect(name).toMatch(/^[0-9a-f]{24}\.part$/);
  for (const sheet of listed.body.sheets) expect(blobs.has(sheet.file.sha256)).toBe(true);
}

describe('killed mid-stream and started again', { timeout: 300_000 }, () => {
  it('every acknowledged save and upload is there whole; nothing half-written is anywhere', async () => {
    let proc: ServerProcess = await startServerProcess(env);
    const client = new HttpClient(proc.baseUrl);
    await client.register('crash.builder@example.com');
    const projectId = (
      await client.request<{ id: string }>('POST', '/api/projects', { name: 'Crash' })
    ).body.id;

    // First at whatever moment the stream is in; then at the moment a blob is being written
    // (a file in the storage's temporary folder), the one a torn file could come from.
    for (const moment of ['mid-stream', 'mid-write'] as const) {
      const leftovers = temporaryFiles();
      const s = stream(client, projectId, moment === 'mid-stream' ? 'k1' : 'k2');
      const acknowledged = () => ({
        saves: s.saves.filter((x) => x.outcome === 'acknowledged').length,
        uploads: s.uploads.filter((x) => x.outcome === 'acknowledged').length,
      });
      await waitFor('saves and uploads acknowledged', () => {
        const n = acknowledged();
        return n.saves >= 8 && n.uploads >= 3;
      });
      if (moment === 'mid-write') await blobBeingWritten(leftovers);
      proc.child.kill('SIGKILL');
      expect((await proc.exited).signal).toBe('SIGKILL');
      await s.stop();
      // Answers were only ever acknowledgements or stale-revision refusals.
      expect(s.statuses.filter((x) => ![200, 201, 204, 409].includes(x))).toEqual([]);

      // The same database, storage folder and session secret; a fresh port.
      env = { ...env, PORT: String(await freePort()) };
      proc = await startServerProcess(env);
      client.baseUrl = proc.baseUrl;
      // The session made before the kill is still signed in.
      const session = await client.request<{ user: { email: string } | null }>(
        'GET',
        '/api/auth/session',
      );
      expect(session.body.user?.email).toBe('crash.builder@example.com');
      await checkConsistent(client, projectId, s);
    }

    // The restarted app works on: a save on the current revision, an upload read back whole.
    const current = await client.request<{ revision: number; model: FairsheetModelInput }>(
      'GET',
      `/api/projects/${projectId}/model`,
    );
    const saved = await client.request<{ revision: number }>(
      'PUT',
      `/api/projects/${projectId}/model`,
      { revision: current.body.revision, model: current.body.model, note: 'after the crash' },
    );
    expect(saved.status).toBe(200);
    expect(saved.body.revision).toBe(current.body.revision + 1);
    const bytes = noisePng();
    const form = pngForm(bytes, 'after.png');
    const uploaded = await client.request<{ sheets: { id: string; file: { sha256: string } }[] }>(
      'POST',
      `/api/projects/${projectId}/sheets`,
      form,
    );
    expect(uploaded.status).toBe(201);
    expect(uploaded.body.sheets[0]!.file.sha256).toBe(sha256(bytes));

    proc.child.kill('SIGTERM');
    expect(await proc.exited).toEqual({ code: 0, signal: null });
  });
});
