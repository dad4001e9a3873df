import type { Env } from '../env';
import { createLocalStorage } from './local';
import { createS3Storage } from './s3';
import type { BlobStorage } from './storage';

export * from './storage';
export { createLocalStorage } from './local';
export { createS3Storage } from './s3';

/** The storage the configuration names: local disk under UPLOAD_DIR, or an S3 bucket. */
export function storageFromEnv(env: Env): BlobStorage {
  if (env.STORAGE === 'local') return createLocalStorage(env.UPLOAD_DIR);
  return createS3Storage({
    bucket: env.S3_BUCKET!,
    endpoint: env.S3_ENDPOINT,
    region: env.S3_REGION,
    credentials:
      env.S3_ACCESS_KEY_ID && env.S3_SECRET_ACCESS_KEY
        ? { accessKeyId: env.S3_ACCESS_KEY_ID, secretAccessKey: env.S3_SECRET_ACCESS_KEY }
        : undefined,
    forcePathStyle: env.S3_FORCE_PATH_STYLE,
  });
}
