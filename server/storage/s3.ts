import {
  DeleteObjectCommand,
  GetObjectCommand,
  HeadObjectCommand,
  PutObjectCommand,
  S3Client,
  S3ServiceException,
} from '@aws-sdk/client-s3';
import { createReadStream } from 'node:fs';
import type { Readable } from 'node:stream';
import {
  assertKey,
  BlobNotFoundError,
  hashSource,
  type BlobSource,
  type BlobStorage,
  type ByteRange,
  type PutResult,
} from './storage';

export interface S3StorageOptions {
  bucket: string;
  /** Any S3-compatible service; unset means AWS itself. */
  endpoint?: string;
  region: string;
  /** Unset: the SDK's usual credential chain (environment, profile, instance role). */
  credentials?: { accessKeyId: string; secretAccessKey: string };
  /** Bucket in the path (`host/bucket/key`), as most self-hosted services need. */
  forcePathStyle: boolean;
  /** Prefix of every key in the bucket. */
  prefix?: string;
}

function isNotFound(err: unknown): boolean {
  if (err instanceof S3ServiceException) {
    return err.$metadata?.httpStatusCode === 404 || ['NotFound', 'NoSuchKey'].includes(err.name);
  }
  return false;
}

/**
 * Blobs in an S3-compatible bucket at `blobs/<sha256>`. The key is the hash, so a put first
 * asks whether the object is there and writes nothing when it is; S3 makes a finished put
 * visible whole or not at all, which is what the temporary name gives on local disk.
 */
export function createS3Storage(options: S3StorageOptions, client?: S3Client): BlobStorage {
  const s3 =
    client ??
    new S3Client({
      endpoint: options.endpoint,
      region: options.region,
      credentials: options.credentials,
      forcePathStyle: options.forcePathStyle,
      // Only the checksums S3 itself requires: the newer default (CRC trailers on streamed
      // bodies) is not understood by every S3-compatible service.
      requestChecksumCalculation: 'WHEN_REQUIRED',
      responseChecksumValidation: 'WHEN_REQUIRED',
    });
  const Bucket = options.bucket;
  const keyOf = (sha256: string) => `${options.prefix ?? 'blobs/'}${assertKey(sha256)}`;

  async function exists(sha256: string): Promise<boolean> {
    try {
      await s3.send(new HeadObjectCommand({ Bucket, Key: keyOf(sha256) }));
      return true;
    } catch (err) {
      if (isNotFound(err)) return false;
      throw err;
    }
  }

  async function put(source: BlobSource, contentType: string): Promise<PutResult> {
    const { sha256, sizeBytes } = await hashSource(source);
    if (await exists(sha256)) return { sha256, sizeBytes, created: false };
    await s3.send(
      new PutObjectCommand({
        Bucket,
        Key: keyOf(sha256),
        Body: Buffer.isBuffer(source) ? source : createReadStream(source.path),
        ContentLength: sizeBytes,
        ContentType: contentType,
        // The key names the content; the service checks the bytes against it on arrival.
        ChecksumSHA256: Buffer.from(sha256, 'hex').toString('base64'),
      }),
    );
    return { sha256, sizeBytes, created: true };
  }

  async function get(sha256: string, range?: ByteRange): Promise<Readable> {
    try {
      const out = await s3.send(
        new GetObjectCommand({
          Bucket,
          Key: keyOf(sha256),
          Range: range ? `bytes=${range.start}-${range.end}` : undefined,
        }),
      );
      return out.Body as Readable;
    } catch (err) {
      if (isNotFound(err)) throw new BlobNotFoundError(sha256);
      throw err;
    }
  }

  async function remove(sha256: string): Promise<void> {
    await s3.send(new DeleteObjectCommand({ Bucket, Key: keyOf(sha256) }));
  }

  return { kind: 's3', put, get, exists, delete: remove };
}
