import type { APIRoute } from 'astro';
import { handle } from '../../../../lib/http/respond';
import { parseJson, parseParams, IdParam } from '../../../../lib/http/parse';
import { requireStudyAction } from '../../../../lib/auth/session';
import { actor } from '../../../../lib/http/actor';
import { PositivityRequest } from '../../../../lib/schemas/positivity';
import { appDb } from '../../../../lib/services/appDb';
import { getPositivity } from '../../../../lib/services/studies/getPositivity';
import { setPositivity } from '../../../../lib/services/studies/setPositivity';

/** The study's positivity settings per marker and the fields linked with other settings (lab members). */
export const GET = handle(async (ctx) => {
  const { id } = parseParams(ctx.params, IdParam);
  const db = await appDb();
  await requireStudyAction(db, ctx.locals, id, 'study.read', 'see this study\'s analysis settings');
  return Response.json(await getPositivity(db, id));
}) satisfies APIRoute;

/**
 * Sets k and an optional hand-set threshold (counts) for some of the study's markers (analysts, admins).
 * Fields already linked keep their results until they are linked again; the answer lists them.
 */
export const PUT = handle(async (ctx) => {
  const { id } = parseParams(ctx.params, IdParam);
  const db = await appDb();
  const { user } = await requireStudyAction(db, ctx.locals, id, 'field.analyse', 'change positivity thresholds');
  const body = await parseJson(ctx.request, PositivityRequest);
  return Response.json(await setPositivity(db, actor(user, ctx), id, body.markers));
}) satisfies APIRoute;
