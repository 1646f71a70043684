/**
 * Staged uploads: the browser PUTs a file to a server-made key under staging/<user>/, the server
 * inspects it, and only a confirmed field moves it under fields/. A rejected file is deleted at once.
 */
import { randomUUID } from 'node:crypto';
import type { Storage } from '../storage/client';
import { stagingKey } from '../storage/keys';
import { getRange, headSize, deleteObject, presignPut } from '../storage/objects';
import { sparseTiffBytes } from './sparseTiffBytes';
import { inspectTiff, ImagingError, type TiffMetadata } from '../imaging';
import { HttpError } from '../http/errors';
import type { InspectReply } from '../schemas/fields';

export interface UploadLimits { maxUploadBytes: number; maxPixels: number; maxDecodedBytes: number }

export async function createStagedUpload(st: Storage, userId: string, sizeBytes: number, limits: UploadLimits) {
  if (sizeBytes > limits.maxUploadBytes) {
    throw new HttpError(413, 'too_large', `The file is ${(sizeBytes / 1024 ** 3).toFixed(2)} GB; the limit is ${(limits.maxUploadBytes / 1024 ** 3).toFixed(2)} GB.`);
  }
  const uploadId = randomUUID();
  const url = await presignPut(st, stagingKey(userId, uploadId), sizeBytes);
  return { uploadId, url };
}

/**
 * Reads a staged file's TIFF structure (no pixel decoding, no pixel bytes fetched). A bad file is deleted and answered with
 * 422 and a message for the person who uploaded it; a missing one with 404.
 */
export async function inspectStagedUpload(st: Storage, userId: string, uploadId: string, limits: UploadLimits): Promise<{ reply: InspectReply; meta: TiffMetadata; key: string }> {
  const key = stagingKey(userId, uploadId);
  const size = await headSize(st, key);
  if (size === null) throw new HttpError(404, 'upload_missing', 'That upload was not found: the transfer may not have finished. Upload the file again.');
  if (size > limits.maxUploadBytes) {
    await deleteObject(st, key);
    throw new HttpError(413, 'too_large', 'The file is larger than the upload limit.');
  }
  // only the file's structure is read (ranged requests), never its pixels: memory stays flat for large uploads
  const bytes = await sparseTiffBytes(size, (start, end) => getRange(st, key, start, end));
  try {
    const meta = inspectTiff(bytes, { maxFileBytes: limits.maxUploadBytes, maxPixels: limits.maxPixels, maxDecodedBytes: limits.maxDecodedBytes });
    return {
      key,
      meta,
      reply: {
        uploadId, sizeBytes: size, widthPx: meta.width, heightPx: meta.height, bitsPerSample: meta.bitsPerSample,
        sampleFormat: meta.sampleFormat, pageCount: meta.pageCount, compression: meta.compression,
        pixelSizeNm: meta.pixelSizeNm, pixelSizeSource: meta.pixelSizeSource, warnings: meta.warnings,
      },
    };
  } catch (e) {
    if (e instanceof ImagingError) {
      await deleteObject(st, key);
      throw new HttpError(422, e.code, e.message);
    }
    throw e;
  }
}
