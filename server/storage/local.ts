import { randomBytes, createHash } from 'node:crypto';
import { createReadStream } from 'node:fs';
import { mkdir, open, rename, rm, stat } from 'node:fs/promises';
import path from 'node:path';
import type { Readable } from 'node:stream';
import {
  assertKey,
  BlobNotFoundError,
  type BlobSource,
  type BlobStorage,
  type ByteRange,
  type PutResult,
} from './storage';

async function syncFolder(dir: string) {
  const handle = await open(dir, 'r');
  try {
    await handle.sync();
  } finally {
    await handle.close();
  }
}

/**
 * Blobs on local disk under `root`, at `root/ab/abcdef…` (the first two hex digits fan the
 * files out over 256 folders). A new blob is written to `root/.tmp/` under a random name,
 * flushed, and renamed into place, so a reader never sees half a file and a crash leaves at
 * most a stray temporary file, never a wrong blob.
 */
export function createLocalStorage(root: string): BlobStorage {
  const base = path.resolve(root);
  const tmpDir = path.join(base, '.tmp');
  const fileOf = (sha256: string) => path.join(base, assertKey(sha256).slice(0, 2), sha256);

  async function exists(sha256: string): Promise<boolean> {
    try {
      return (await stat(fileOf(sha256))).isFile();
    } catch (err) {
      if ((err as NodeJS.ErrnoException).code === 'ENOENT') return false;
      throw err;
    }
  }

  async function put(source: BlobSource): Promise<PutResult> {
    await mkdir(tmpDir, { recursive: true });
    const tmp = path.join(tmpDir, `${randomBytes(12).toString('hex')}.part`);
    const hash = createHash('sha256');
    let sizeBytes = 0;
    const handle = await open(tmp, 'wx', 0o640);
    try {
      const chunks: AsyncIterable<Buffer> | Buffer[] = Buffer.isBuffer(source)
        ? [source]
        : createReadStream(source.path);
      for await (const chunk of chunks) {
        hash.update(chunk);
        sizeBytes += chunk.length;
        await handle.write(chunk);
      }
      await handle.sync();
    } catch (err) {
      await handle.close();
      await rm(tmp, { force: true });
      throw err;
    }
    await handle.close();
    const sha256 = hash.digest('hex');
    try {
      if (await exists(sha256)) return { sha256, sizeBytes, created: false };
      const target = fileOf(sha256);
      // A fan-out folder made just now is itself a new name in the root: made durable too.
      if (await mkdir(path.dirname(target), { recursive: true })) await syncFolder(base);
      // rename is atomic within one file system; two writers of the same content both win.
      await rename(tmp, target);
      // The file's bytes were synced before the rename; syncing the folder makes the new name
      // durable too, before the caller commits a row that points at it.
      await syncFolder(path.dirname(target));
      return { sha256, sizeBytes, created: true };
    } finally {
      await rm(tmp, { force: true });
    }
  }

  async function get(sha256: string, range?: ByteRange): Promise<Readable> {
    let handle;
    try {
      handle = await open(fileOf(sha256), 'r');
    } catch (err) {
      if ((err as NodeJS.ErrnoException).code === 'ENOENT') throw new BlobNotFoundError(sha256);
      throw err;
    }
    return handle.createReadStream(range ? { start: range.start, end: range.end } : {});
  }

  async function remove(sha256: string): Promise<void> {
    await rm(fileOf(sha256), { force: true });
  }

  return { kind: 'local', put, get, exists, delete: remove };
}
