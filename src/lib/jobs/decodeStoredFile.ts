/**
 * How the jobs decode a stored image: fetched from the bucket, then decoded in a sandboxed thread with
 * the configured size limits, a time limit and a heap limit. One place, so ingestion, linking and the
 * fuzz test that stands in for them cannot drift apart.
 */
import { decodeInWorker } from '../imaging';
import type { Storage } from '../storage/client';
import { getBytes } from '../storage/objects';
import { config } from '../config';

/** The decode limits from the configuration (bytes, pixels, decoded bytes). */
export interface DecodeLimits { maxFileBytes: number; maxPixels: number; maxDecodedBytes: number }

/** Time and heap limits of one job decode: a 2 GB upload may take a while, a hostile one may not run forever. */
export const JOB_DECODE_OPTIONS = { timeoutMs: 120_000, maxHeapMb: 4096 } as const;

/** The upload limits of the configuration, as the jobs apply them. */
export function jobDecodeLimits(c = config()): DecodeLimits {
  return { maxFileBytes: c.MAX_UPLOAD_BYTES, maxPixels: c.MAX_IMAGE_PIXELS, maxDecodedBytes: c.MAX_DECODED_BYTES };
}

/** Fetches `key` and decodes it as the jobs do. */
export async function decodeStoredFile(st: Storage, key: string, limits: DecodeLimits) {
  return decodeInWorker(await getBytes(st, key), limits, JOB_DECODE_OPTIONS);
}
