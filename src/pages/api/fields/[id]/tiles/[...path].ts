import type { APIRoute } from 'astro';
import { z } from 'zod';
import { handle } from '../../../../../lib/http/respond';
import { parseParams } from '../../../../../lib/http/parse';
import { requireFieldAction } from '../../../../../lib/auth/fieldAccess';
import { appDb } from '../../../../../lib/services/appDb';
import { readTile } from '../../../../../lib/services/fields/readTile';

// Only the Deep Zoom shapes ("height.dzi", "ch0_files/12/3_4.png") and the read-out values
// ("height.f32"); anything else (../, other keys) is 404.
const TilePath = z.object({
  id: z.uuid(),
  path: z.string().regex(/^(height|ch\d{1,2})(\.dzi|\.f32|_files\/\d{1,2}\/\d{1,5}_\d{1,5}\.png)$/),
});

/** Tiles and descriptors of a field's layers, streamed from the bucket after a membership check. */
export const GET = handle(async (ctx) => {
  const { id, path } = parseParams(ctx.params, TilePath);
  const { field } = await requireFieldAction(await appDb(), ctx.locals, id, 'study.read', 'view this field');
  const tile = await readTile(field, path);
  return new Response(tile.body as unknown as BodyInit, {
    headers: {
      'content-type': path.endsWith('.dzi') ? 'application/xml' : path.endsWith('.f32') ? 'application/octet-stream' : 'image/png',
      // Private: tiles are behind sign-in; they change only when the field is re-ingested.
      'cache-control': 'private, max-age=300',
      ...(tile.lengthBytes !== undefined ? { 'content-length': String(tile.lengthBytes) } : {}),
    },
  });
}) satisfies APIRoute;
