import type { APIRoute } from 'astro';
import { Readable } from 'node:stream';
import { z } from 'zod';
import { handle } from '../../../../../lib/http/respond';
import { parseParams } from '../../../../../lib/http/parse';
import { HttpError } from '../../../../../lib/http/errors';
import { getDb } from '../../../../../lib/db/client';
import { requireFieldAction } from '../../../../../lib/auth/fieldAccess';
import { getStorage } from '../../../../../lib/storage/client';
import { getBytes, getStream } from '../../../../../lib/storage/objects';
import { objectCache } from '../../../../../lib/storage/objectCache';
import { tilePrefix } from '../../../../../lib/storage/keys';

// Only the Deep Zoom shapes ("height.dzi", "ch0_files/12/3_4.png") and the read-out values
// ("height.f32"); anything else (../, other keys) is 404.
const TilePath = z.object({
  id: z.uuid(),
  path: z.string().regex(/^(height|ch\d{1,2})(\.dzi|\.f32|_files\/\d{1,2}\/\d{1,5}_\d{1,5}\.png)$/),
});

/** Tiles and descriptors of a field's layers, streamed from the bucket after a membership check. */
export const GET = handle(async (ctx) => {
  const { id, path } = parseParams(ctx.params, TilePath);
  const db = await getDb();
  const { field } = await requireFieldAction(db, ctx.locals, id, 'study.read', 'view this field');
  const layer = path.match(/^(height|ch\d{1,2})/)![1];
  const key = tilePrefix(id, layer) + path.slice(layer.length);
  const headers = {
    'content-type': path.endsWith('.dzi') ? 'application/xml' : path.endsWith('.f32') ? 'application/octet-stream' : 'image/png',
    // Private: tiles are behind sign-in; they change only when the field is re-ingested.
    'cache-control': 'private, max-age=300',
  };
  // small tiles come from the process cache (keyed by the field's version), large read-outs stream
  const cacheKey = `${key}@${field.version}`;
  const hit = objectCache().get(cacheKey);
  if (hit) return new Response(hit as unknown as BodyInit, { headers });
  try {
    const st = await getStorage();
    if (!path.endsWith('.f32')) {
      const bytes = await getBytes(st, key);
      objectCache().set(cacheKey, bytes);
      return new Response(bytes as unknown as BodyInit, { headers });
    }
    const obj = await getStream(st, key);
    return new Response(Readable.toWeb(obj.body) as ReadableStream, {
      headers: { ...headers, ...(obj.length !== undefined ? { 'content-length': String(obj.length) } : {}) },
    });
  } catch (e) {
    if ((e as Error).name === 'NoSuchKey' || (e as { $metadata?: { httpStatusCode?: number } }).$metadata?.httpStatusCode === 404) {
      throw new HttpError(404, 'not_found', 'That tile does not exist (the field may still be processing).');
    }
    throw e;
  }
}) satisfies APIRoute;
