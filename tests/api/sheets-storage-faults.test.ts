// The order of database rows and stored blobs when a sheet is deleted: a process that dies
// (here: a storage that removes the blob, then fails, as if the process ended right there)
// must leave at worst an unused file, never a sheet whose file is gone.
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it, vi } from 'vitest';
import { createSheetService } from '../../server/services/sheets';
import { createLocalStorage, type BlobStorage } from '../../server/storage';
import { createTestApp, TestClient, type TestApp } from '../helpers/app';
import { makePng } from '../helpers/sheet-files';

const storageDir = mkdtempSync(path.join(tmpdir(), 'fairsheet-faulty-'));
const local = createLocalStorage(storageDir);
let dieAfterDelete = false;
/** The real local storage, except that a removal can "die" right after the blob is gone. */
const storage: BlobStorage = {
  ...local,
  async delete(sha256) {
    await local.delete(sha256);
    if (dieAfterDelete) throw new Error('the process ended here');
  },
};

let t: TestApp;
let c: TestClient;
let projectId: string;

beforeAll(async () => {
  t = await createTestApp({ storage });
  c = new TestClient(t.app);
  await c.register('faulty.storage@example.com');
  projectId = (await c.post('/api/projects', { name: 'Faulty storage' }).expect(201)).body.id;
});
afterAll(async () => {
  await t.close();
  rmSync(storageDir, { recursive: true, force: true });
});

const url = (p: string) => `/api/projects/${projectId}${p}`;

async function uploadPng(bytes: Buffer) {
  const res = await c.agent
    .post(url('/sheets'))
    .set('X-CSRF-Token', c.csrf)
    .attach('file', bytes, { filename: 'plate.png' })
    .expect(201);
  return res.body.sheets[0] as { id: string; file: { sha256: string } };
}

async function fileRows(sha256: string): Promise<number> {
  const { rows } = await t.database.pool.query('select 1 from files where sha256 = $1', [sha256]);
  return rows.length;
}

describe('deleting a sheet when the blob removal dies half way', () => {
  it('the sheet is gone (204), its file stays as an unused row until the start-up sweep, and the same content uploads again whole', async () => {
    const bytes = makePng(7, 5, 91);
    const sheet = await uploadPng(bytes);
    const logged = vi.spyOn(console, 'error').mockImplementation(() => {});
    dieAfterDelete = true;
    try {
      await c.delete(url(`/sheets/${sheet.id}`)).expect(204);
    } finally {
      dieAfterDelete = false;
      logged.mockRestore();
    }
    // No sheet points at the missing blob: the sheet's deletion was committed first.
    await c.get(url(`/sheets/${sheet.id}`)).expect(404);
    expect((await c.get(url('/sheets'))).body.sheets).toEqual([]);
    expect(await storage.exists(sheet.file.sha256)).toBe(false);
    // The failed removal left the file's row, used by nothing: what the start-up sweep removes.
    expect(await fileRows(sheet.file.sha256)).toBe(1);

    // Uploading the same content before the sweep writes the blob again: it reads back whole.
    const again = await uploadPng(bytes);
    expect(again.file.sha256).toBe(sheet.file.sha256);
    const file = await c.get(url(`/sheets/${again.id}/file`)).expect(200);
    expect(Buffer.compare(file.body as Buffer, bytes)).toBe(0);

    // Deleted again with nothing dying: row and blob go, nothing is left for the sweep.
    await c.delete(url(`/sheets/${again.id}`)).expect(204);
    const sheets = createSheetService({ db: t.database.db, storage });
    expect(await sheets.removeUnusedFiles()).toBe(0);
    expect(await fileRows(sheet.file.sha256)).toBe(0);
    expect(await storage.exists(sheet.file.sha256)).toBe(false);
  });

  it('a removal that dies leaves nothing the sweep cannot finish', async () => {
    const bytes = makePng(7, 5, 92);
    const sheet = await uploadPng(bytes);
    vi.spyOn(console, 'error').mockImplementation(() => {});
    dieAfterDelete = true;
    try {
      await c.delete(url(`/sheets/${sheet.id}`)).expect(204);
    } finally {
      dieAfterDelete = false;
      vi.restoreAllMocks();
    }
    expect(await fileRows(sheet.file.sha256)).toBe(1);
    const sheets = createSheetService({ db: t.database.db, storage });
    expect(await sheets.removeUnusedFiles()).toBe(1);
    expect(await fileRows(sheet.file.sha256)).toBe(0);
  });
});
