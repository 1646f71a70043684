import type { APIRoute } from 'astro';
import { handle } from '../../../../lib/http/respond';
import { parseJson, parseParams, IdParam } from '../../../../lib/http/parse';
import { requireStudyAction } from '../../../../lib/auth/session';
import { RelinkRequest } from '../../../../lib/schemas/positivity';
import { appDb } from '../../../../lib/services/appDb';
import { relinkFields } from '../../../../lib/services/studies/relinkFields';

/**
 * Queues linking again, with the study's current positivity settings, of the given linked fields (analysts, admins).
 * Approved fields are skipped with a reason: they must be sent back first.
 */
export const POST = handle(async (ctx) => {
  const { id } = parseParams(ctx.params, IdParam);
  const db = await appDb();
  await requireStudyAction(db, ctx.locals, id, 'field.analyse', 'link fields');
  const body = await parseJson(ctx.request, RelinkRequest);
  return Response.json(await relinkFields(db, id, body.fieldIds), { status: 202 });
}) satisfies APIRoute;
