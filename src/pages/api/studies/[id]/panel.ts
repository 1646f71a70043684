import type { APIRoute } from 'astro';
import { handle } from '../../../../lib/http/respond';
import { parseJson, parseParams, IdParam } from '../../../../lib/http/parse';
import { requireStudyAction } from '../../../../lib/auth/session';
import { actor } from '../../../../lib/http/actor';
import { PanelRequest } from '../../../../lib/schemas/people';
import { appDb } from '../../../../lib/services/appDb';
import { replacePanel } from '../../../../lib/services/studies/replacePanel';

/**
 * Replaces the study's marker panel (biologists, admins). Once fields exist, the number of channels
 * is fixed: their files were checked against it.
 */
export const PUT = handle(async (ctx) => {
  const { id } = parseParams(ctx.params, IdParam);
  const db = await appDb();
  const { user } = await requireStudyAction(db, ctx.locals, id, 'sample.write', 'edit the marker panel');
  const body = await parseJson(ctx.request, PanelRequest);
  return Response.json({ channels: await replacePanel(db, actor(user, ctx), id, body.channels) });
}) satisfies APIRoute;
