import type { APIRoute } from 'astro';
import { handle } from '../../../../lib/http/respond';
import { parseParams, IdParam } from '../../../../lib/http/parse';
import { HttpError } from '../../../../lib/http/errors';
import { getDb } from '../../../../lib/db/client';
import { requireFieldAction } from '../../../../lib/auth/fieldAccess';
import { getStorage } from '../../../../lib/storage/client';
import { getBytes } from '../../../../lib/storage/objects';
import { detectionKey } from '../../../../lib/storage/keys';
import { objectCache } from '../../../../lib/storage/objectCache';

/** Detected vesicles, fiducial candidates and spots of a field (pixels of each image), for overlays and snapping. */
export const GET = handle(async (ctx) => {
  const { id } = parseParams(ctx.params, IdParam);
  const db = await getDb();
  const { field } = await requireFieldAction(db, ctx.locals, id, 'study.read', 'view this field');
  if (['uploading', 'ingesting', 'failed'].includes(field.status)) {
    throw new HttpError(409, 'not_ready', 'The field has not been processed yet.');
  }
  const cacheKey = `${detectionKey(id)}@${field.version}`;
  const bytes = objectCache().get(cacheKey) ?? (await getBytes(await getStorage(), detectionKey(id)));
  objectCache().set(cacheKey, bytes);
  return new Response(new TextDecoder().decode(bytes), { headers: { 'content-type': 'application/json', 'cache-control': 'private, no-cache' } });
}) satisfies APIRoute;
