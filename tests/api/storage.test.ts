import { createHash } from 'node:crypto';
import { mkdtempSync, readdirSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import type { Readable } from 'node:stream';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { BlobNotFoundError, createLocalStorage, type BlobStorage } from '../../server/storage';
import { createTestApp, TestClient, type TestApp } from '../helpers/app';
import { startFakeS3, type FakeS3 } from '../helpers/s3';
import { makePng } from '../helpers/sheet-files';

const sha = (b: Buffer) => createHash('sha256').update(b).digest('hex');

async function read(stream: Readable): Promise<Buffer> {
  const parts: Buffer[] = [];
  for await (const c of stream) parts.push(c as Buffer);
  return Buffer.concat(parts);
}

const scratch = mkdtempSync(path.join(tmpdir(), 'fairsheet-storage-test-'));
afterAll(() => rmSync(scratch, { recursive: true, force: true }));

let fake: FakeS3;
beforeAll(async () => {
  fake = await startFakeS3();
});
afterAll(() => fake?.close());

const s3Storage = (prefix?: string) => fake.storage(prefix);

/** The contract every storage keeps, run against each kind. */
function storageContract(name: string, make: () => BlobStorage) {
  describe(`${name} storage`, () => {
    const bytes = Buffer.from('%PDF-1.7 pretend drawing bytes\n'.repeat(100));

    it('put stores the bytes under their SHA-256 and get answers them', async () => {
      const s = make();
      const put = await s.put(bytes, 'application/pdf');
      expect(put).toEqual({ sha256: sha(bytes), sizeBytes: bytes.length, created: true });
      expect(await s.exists(put.sha256)).toBe(true);
      expect(Buffer.compare(await read(await s.get(put.sha256)), bytes)).toBe(0);
    });

    it('putting the same content twice stores it once (created is false the second time)', async () => {
      const s = make();
      const again = await s.put(Buffer.from(bytes), 'application/pdf');
      expect(again).toEqual({ sha256: sha(bytes), sizeBytes: bytes.length, created: false });
    });

    it('put reads a file on disk without moving it', async () => {
      const s = make();
      const file = path.join(scratch, `${name}-source.bin`);
      const content = Buffer.from(`from disk, ${name}`);
      writeFileSync(file, content);
      const put = await s.put({ path: file }, 'image/png');
      expect(put.sha256).toBe(sha(content));
      expect(readdirSync(scratch)).toContain(`${name}-source.bin`);
      expect((await read(await s.get(put.sha256))).toString()).toBe(`from disk, ${name}`);
    });

    it('get answers an inclusive byte range', async () => {
      const s = make();
      const part = await read(await s.get(sha(bytes), { start: 5, end: 12 }));
      expect(part.toString()).toBe(bytes.subarray(5, 13).toString());
    });

    it('delete removes a blob, and deleting a missing one is not an error', async () => {
      const s = make();
      const { sha256 } = await s.put(Buffer.from(`short-lived ${name}`), 'image/png');
      await s.delete(sha256);
      expect(await s.exists(sha256)).toBe(false);
      await expect(s.delete(sha256)).resolves.toBeUndefined();
    });

    it('get of a missing blob throws BlobNotFoundError', async () => {
      const s = make();
      await expect(s.get('0'.repeat(64))).rejects.toBeInstanceOf(BlobNotFoundError);
      expect(await s.exists('0'.repeat(64))).toBe(false);
    });

    it('a key that is not a SHA-256 is refused before it reaches the store', async () => {
      const s = make();
      for (const key of ['../../etc/passwd', 'A'.repeat(64), `${'a'.repeat(63)}/`]) {
        await expect(s.get(key)).rejects.toThrow(/Not a SHA-256 key/);
        await expect(s.delete(key)).rejects.toThrow(/Not a SHA-256 key/);
      }
    });
  });
}

const localRoot = path.join(scratch, 'local');
storageContract('local', () => createLocalStorage(localRoot));
storageContract('S3', () => s3Storage());

describe('local storage on disk', () => {
  it('keeps blobs at root/ab/<sha256> and leaves no temporary file behind', async () => {
    const root = path.join(scratch, 'layout');
    const s = createLocalStorage(root);
    const content = Buffer.from('layout check');
    const { sha256 } = await s.put(content, 'image/png');
    await s.put(content, 'image/png');
    expect(readdirSync(path.join(root, sha256.slice(0, 2)))).toEqual([sha256]);
    expect(readdirSync(path.join(root, '.tmp'))).toEqual([]);
  });
});

describe('the API on S3 storage', () => {
  let t: TestApp;
  let client: TestClient;
  let projectId: string;
  const storage = () => s3Storage('api/');

  beforeAll(async () => {
    t = await createTestApp({ storage: storage() });
    client = new TestClient(t.app);
    await client.register('s3.owner@example.com');
    projectId = (
      await client.post('/api/projects', { name: 'On S3', displayUnit: 'mm' }).expect(201)
    ).body.id;
  });
  afterAll(() => t.close());

  it('an upload is stored in the bucket, served back byte for byte, and removed on delete', async () => {
    const png = makePng(12, 10, 3);
    const res = await client.agent
      .post(`/api/projects/${projectId}/sheets`)
      .set('X-CSRF-Token', client.csrf)
      .attach('file', png, { filename: 'bucket.png' })
      .attach('file', png, { filename: 'same-again.png' })
      .expect(201);
    const [a, b] = res.body.sheets;
    expect(a.file.sha256).toBe(sha(png));
    expect(b.file.sha256).toBe(a.file.sha256);
    expect(await storage().exists(a.file.sha256)).toBe(true);

    const file = await client.get(`/api/projects/${projectId}/sheets/${a.id}/file`).expect(200);
    expect(Buffer.compare(file.body as Buffer, png)).toBe(0);
    expect(file.headers.etag).toBe(`"${a.file.sha256}"`);

    await client.delete(`/api/projects/${projectId}/sheets/${a.id}`).expect(204);
    expect(await storage().exists(a.file.sha256)).toBe(true);
    await client.delete(`/api/projects/${projectId}/sheets/${b.id}`).expect(204);
    expect(await storage().exists(a.file.sha256)).toBe(false);
  });

  it('deleting a project removes its files from the bucket at once, but not one another project uses', async () => {
    const newProject = async (name: string) =>
      (await client.post('/api/projects', { name, displayUnit: 'mm' }).expect(201)).body
        .id as string;
    const [doomed, kept] = [await newProject('Doomed on S3'), await newProject('Kept on S3')];
    const own = makePng(7, 5, 11);
    const shared = makePng(7, 5, 12);
    const put = (project: string, png: Buffer) =>
      client.agent
        .post(`/api/projects/${project}/sheets`)
        .set('X-CSRF-Token', client.csrf)
        .attach('file', png, { filename: 'p.png' })
        .expect(201);
    await put(doomed, own);
    await put(doomed, shared);
    await put(kept, shared);
    expect(await storage().exists(sha(own))).toBe(true);

    await client.delete(`/api/projects/${doomed}`).expect(204);
    expect(await storage().exists(sha(own))).toBe(false);
    expect(await storage().exists(sha(shared))).toBe(true);
  });
});
