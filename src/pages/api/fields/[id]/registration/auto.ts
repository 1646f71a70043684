import type { APIRoute } from 'astro';
import { handle } from '../../../../../lib/http/respond';
import { parseJson, parseParams, IdParam } from '../../../../../lib/http/parse';
import { requireFieldAction } from '../../../../../lib/auth/fieldAccess';
import { AutoPairRequest } from '../../../../../lib/schemas/registration';
import { appDb } from '../../../../../lib/services/appDb';
import { proposeFieldPairs } from '../../../../../lib/services/fields/proposeFieldPairs';

/** Proposes fiducial pairs without clicks (RANSAC of the chosen model over detected beads/vesicles and spots); nothing is saved. */
export const POST = handle(async (ctx) => {
  const { id } = parseParams(ctx.params, IdParam);
  const { field } = await requireFieldAction(await appDb(), ctx.locals, id, 'field.analyse', 'find pairs');
  const body = await parseJson(ctx.request, AutoPairRequest);
  return Response.json(await proposeFieldPairs(field, body));
}) satisfies APIRoute;
