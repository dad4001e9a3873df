import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import S3rver from 's3rver';
import { createS3Storage, type BlobStorage } from '../../server/storage';

export interface FakeS3 {
  /** A storage client of its own on the one bucket, as each app instance would have. */
  storage(prefix?: string): BlobStorage;
  close(): Promise<void>;
}

/** A local fake S3 (s3rver on loopback, its objects in a temp folder) with one bucket. */
export async function startFakeS3(bucket = 'fairsheet-test'): Promise<FakeS3> {
  const dir = mkdtempSync(path.join(tmpdir(), 'fairsheet-s3-'));
  const fake = new S3rver({
    address: '127.0.0.1',
    port: 0,
    silent: true,
    directory: dir,
    configureBuckets: [{ name: bucket, configs: [] }],
  });
  const { port } = await fake.run();
  const endpoint = `http://127.0.0.1:${port}`;
  return {
    storage: (prefix = 'blobs/') =>
      createS3Storage({
        bucket,
        endpoint,
        region: 'us-east-1',
        // s3rver's built-in account.
        credentials: { accessKeyId: 'S3RVER', secretAccessKey: 'S3RVER' },
        forcePathStyle: true,
        prefix,
      }),
    async close() {
      await fake.close();
      rmSync(dir, { recursive: true, force: true });
    },
  };
}
