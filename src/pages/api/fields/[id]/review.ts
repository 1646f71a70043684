import type { APIRoute } from 'astro';
import { handle } from '../../../../lib/http/respond';
import { parseJson, parseParams, IdParam } from '../../../../lib/http/parse';
import { requireFieldAction } from '../../../../lib/auth/fieldAccess';
import { actor } from '../../../../lib/http/actor';
import { ReviewRequest } from '../../../../lib/schemas/vesicles';
import { appDb } from '../../../../lib/services/appDb';
import { recordReview } from '../../../../lib/services/fields/recordReview';

/**
 * Approves a linked field, or sends it back with a comment. The request names the field version the
 * reviewer saw; if the field changed since (another approval, a new linking), 409 and nothing is written.
 */
export const POST = handle(async (ctx) => {
  const { id } = parseParams(ctx.params, IdParam);
  const db = await appDb();
  const { user, field } = await requireFieldAction(db, ctx.locals, id, 'field.analyse', 'approve fields');
  const body = await parseJson(ctx.request, ReviewRequest);
  return Response.json(await recordReview(db, actor(user, ctx), field, body));
}) satisfies APIRoute;
