import { createHash } from 'node:crypto';
import { createReadStream } from 'node:fs';
import type { Readable } from 'node:stream';

/**
 * Where uploaded files live: a blob store addressed by the SHA-256 of the content, so the same
 * file uploaded twice is kept once. Keys are 64 lower-case hex digits and nothing else, so no
 * caller can reach outside the store with a crafted key.
 */
export interface BlobStorage {
  readonly kind: 'local' | 's3';
  /**
   * Stores the bytes under their SHA-256 and answers the key. `created` is false when the same
   * content was already there (nothing is written then). A source may be a buffer or a file on
   * disk (read, never moved).
   */
  put(source: BlobSource, contentType: string): Promise<PutResult>;
  /** The bytes of a blob, or of the inclusive byte range; throws BlobNotFoundError. */
  get(sha256: string, range?: ByteRange): Promise<Readable>;
  exists(sha256: string): Promise<boolean>;
  /** Removes a blob; removing one that is not there is not an error. */
  delete(sha256: string): Promise<void>;
}

export type BlobSource = Buffer | { path: string };

export interface PutResult {
  sha256: string;
  sizeBytes: number;
  created: boolean;
}

/** Inclusive byte positions, as in an HTTP Range header. */
export interface ByteRange {
  start: number;
  end: number;
}

export class BlobNotFoundError extends Error {
  override readonly name = 'BlobNotFoundError';
  constructor(readonly sha256: string) {
    super(`No stored file ${sha256}`);
  }
}

const KEY = /^[0-9a-f]{64}$/;

export function assertKey(sha256: string): string {
  if (!KEY.test(sha256)) throw new Error(`Not a SHA-256 key: ${JSON.stringify(sha256)}`);
  return sha256;
}

/** SHA-256 (hex) and size of a source, reading a file as a stream. */
export async function hashSource(
  source: BlobSource,
): Promise<{ sha256: string; sizeBytes: number }> {
  const hash = createHash('sha256');
  if (Buffer.isBuffer(source)) {
    return { sha256: hash.update(source).digest('hex'), sizeBytes: source.length };
  }
  let sizeBytes = 0;
  for await (const chunk of createReadStream(source.path)) {
    hash.update(chunk as Buffer);
    sizeBytes += (chunk as Buffer).length;
  }
  return { sha256: hash.digest('hex'), sizeBytes };
}
