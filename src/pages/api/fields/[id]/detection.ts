import type { APIRoute } from 'astro';
import { handle } from '../../../../lib/http/respond';
import { parseParams, IdParam } from '../../../../lib/http/parse';
import { requireFieldAction } from '../../../../lib/auth/fieldAccess';
import { appDb } from '../../../../lib/services/appDb';
import { readDetection } from '../../../../lib/services/fields/readDetection';

/** Detected vesicles, fiducial candidates and spots of a field (pixels of each image), for overlays and snapping. */
export const GET = handle(async (ctx) => {
  const { id } = parseParams(ctx.params, IdParam);
  const { field } = await requireFieldAction(await appDb(), ctx.locals, id, 'study.read', 'view this field');
  return new Response(await readDetection(field), { headers: { 'content-type': 'application/json', 'cache-control': 'private, no-cache' } });
}) satisfies APIRoute;
