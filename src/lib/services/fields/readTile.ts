import { Readable } from 'node:stream';
import { getStorage } from '../../storage/client';
import { getBytes, getStream } from '../../storage/objects';
import { objectCache } from '../../storage/objectCache';
import { tilePrefix } from '../../storage/keys';
import { HttpError } from '../../http/errors';

/**
 * One tile or descriptor of a field's layer (`path` already checked against the Deep Zoom and read-out shapes, e.g.
 * "ch0_files/12/3_4.png", "height.f32"). Small tiles come from the process cache (keyed by the field's version, as
 * tiles change only when the field is re-ingested); large read-outs stream from the bucket with their length.
 * @throws HttpError 404 `not_found` when the bucket has no such object
 */
export async function readTile(field: { id: string; version: number }, path: string): Promise<{ body: Uint8Array | ReadableStream; lengthBytes?: number }> {
  const layer = path.match(/^(height|ch\d{1,2})/)![1];
  const key = tilePrefix(field.id, layer) + path.slice(layer.length);
  const cacheKey = `${key}@${field.version}`;
  const hit = objectCache().get(cacheKey);
  if (hit) return { body: hit };
  try {
    const st = await getStorage();
    if (!path.endsWith('.f32')) {
      const bytes = await getBytes(st, key);
      objectCache().set(cacheKey, bytes);
      return { body: bytes };
    }
    const obj = await getStream(st, key);
    return { body: Readable.toWeb(obj.body) as ReadableStream, lengthBytes: obj.length };
  } catch (e) {
    if ((e as Error).name === 'NoSuchKey' || (e as { $metadata?: { httpStatusCode?: number } }).$metadata?.httpStatusCode === 404) {
      throw new HttpError(404, 'not_found', 'That tile does not exist (the field may still be processing).');
    }
    throw e;
  }
}
