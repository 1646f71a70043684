/**
 * Staged uploads: the browser PUTs a file to a server-made key under staging/<user>/ (a presigned URL bound to
 * that key, size and type, valid minutes), the server copies it to a key only the app writes and inspects that
 * copy, and only a confirmed field moves the copy under fields/. A rejected file is deleted at once.
 */
import { randomUUID } from 'node:crypto';
import type { Storage } from '../storage/client';
import { inspectedKey, stagingKey } from '../storage/keys';
import { copyObject, getRange, headSize, deleteObject, presignPut } from '../storage/objects';
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
 * Reads a staged file's TIFF structure (no pixel decoding, no pixel bytes fetched). The first inspection copies the
 * staged object to its inspected key and removes the staged one, so replacing the upload after it was inspected
 * changes nothing; later inspections (the field confirmation) read that copy. A bad file is deleted and answered
 * with 422 and a message for the person who uploaded it; a missing one with 404.
 */
export async function inspectStagedUpload(st: Storage, userId: string, uploadId: string, limits: UploadLimits): Promise<{ reply: InspectReply; meta: TiffMetadata; key: string }> {
  const key = inspectedKey(userId, uploadId);
  let size = await headSize(st, key);
  // a staged object beside an inspected copy was sent again through a still-valid URL after the inspection: drop it
  if (size !== null) await deleteObject(st, stagingKey(userId, uploadId));
  if (size === null) {
    const staged = stagingKey(userId, uploadId);
    const stagedSize = await headSize(st, staged);
    if (stagedSize === null) throw new HttpError(404, 'upload_missing', 'That upload was not found: the transfer may not have finished. Upload the file again.');
    if (stagedSize > limits.maxUploadBytes) {
      await deleteObject(st, staged);
      throw new HttpError(413, 'too_large', 'The file is larger than the upload limit.');
    }
    await copyObject(st, staged, key);
    await deleteObject(st, staged);
    size = (await headSize(st, key)) ?? 0;
  }
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
