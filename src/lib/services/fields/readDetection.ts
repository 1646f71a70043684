import { getStorage } from '../../storage/client';
import { getBytes } from '../../storage/objects';
import { detectionKey } from '../../storage/keys';
import { objectCache } from '../../storage/objectCache';
import { HttpError } from '../../http/errors';

/**
 * The stored detection of a processed field (vesicles, fiducial candidates and spots, in pixels of each image) as
 * JSON text, through the process cache keyed by the field's version.
 * @throws HttpError 409 `not_ready` while the field is uploading, ingesting or failed
 */
export async function readDetection(field: { id: string; status: string; version: number }): Promise<string> {
  if (['uploading', 'ingesting', 'failed'].includes(field.status)) {
    throw new HttpError(409, 'not_ready', 'The field has not been processed yet.');
  }
  const cacheKey = `${detectionKey(field.id)}@${field.version}`;
  const bytes = objectCache().get(cacheKey) ?? (await getBytes(await getStorage(), detectionKey(field.id)));
  objectCache().set(cacheKey, bytes);
  return new TextDecoder().decode(bytes);
}
