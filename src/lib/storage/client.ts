import { S3Client } from '@aws-sdk/client-s3';

export interface StorageSettings {
  endpoint: string;
  region: string;
  bucket: string;
  accessKeyId: string;
  secretAccessKey: string;
  forcePathStyle: boolean;
}

export interface Storage {
  s3: S3Client;
  bucket: string;
}

/** Builds an S3 client for `settings` (tests and scripts call this directly). */
export function createStorage(settings: StorageSettings): Storage {
  const s3 = new S3Client({
    endpoint: settings.endpoint,
    region: settings.region,
    forcePathStyle: settings.forcePathStyle,
    credentials: { accessKeyId: settings.accessKeyId, secretAccessKey: settings.secretAccessKey },
    // s3rver does not implement the newer integrity checksums; ask for them only where required.
    requestChecksumCalculation: 'WHEN_REQUIRED',
    responseChecksumValidation: 'WHEN_REQUIRED',
  });
  return { s3, bucket: settings.bucket };
}

const g = globalThis as unknown as { __heightlightStorage?: Storage };

/** The process-wide storage handle built from the configuration. */
export async function getStorage(): Promise<Storage> {
  if (!g.__heightlightStorage) {
    const { config } = await import('../config');
    const c = config();
    g.__heightlightStorage = createStorage({
      endpoint: c.S3_ENDPOINT, region: c.S3_REGION, bucket: c.S3_BUCKET,
      accessKeyId: c.S3_ACCESS_KEY_ID, secretAccessKey: c.S3_SECRET_ACCESS_KEY, forcePathStyle: c.S3_FORCE_PATH_STYLE,
    });
  }
  return g.__heightlightStorage;
}
