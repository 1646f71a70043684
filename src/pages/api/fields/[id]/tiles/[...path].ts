import type { APIRoute } from 'astro';
import { Readable } from 'node:stream';
import { z } from 'zod';
import { handle } from '../../../../../lib/http/respond';
import { parseParams } from '../../../../../lib/http/parse';
import { HttpError } from '../../../../../lib/http/errors';
import { getDb } from '../../../../../lib/db/client';
import { requireFieldAction } from '../../../../../lib/auth/fieldAccess';
import { getStorage } from '../../../../../lib/storage/client';
import { getStream } from '../../../../../lib/storage/objects';
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
  await requireFieldAction(db, ctx.locals, id, 'study.read', 'view this field');
  const layer = path.match(/^(height|ch\d{1,2})/)![1];
  const key = tilePrefix(id, layer) + path.slice(layer.length);
  try {
    const obj = await getStream(await getStorage(), key);
    return new Response(Readable.toWeb(obj.body) as ReadableStream, {
      headers: {
        'content-type': path.endsWith('.dzi') ? 'application/xml' : path.endsWith('.f32') ? 'application/octet-stream' : 'image/png',
        ...(obj.length !== undefined ? { 'content-length': String(obj.length) } : {}),
        // Private: tiles are behind sign-in; they change only when the field is re-ingested.
        'cache-control': 'private, max-age=300',
      },
    });
  } catch (e) {
    if ((e as Error).name === 'NoSuchKey' || (e as { $metadata?: { httpStatusCode?: number } }).$metadata?.httpStatusCode === 404) {
      throw new HttpError(404, 'not_found', 'That tile does not exist (the field may still be processing).');
    }
    throw e;
  }
}) satisfies APIRoute;
