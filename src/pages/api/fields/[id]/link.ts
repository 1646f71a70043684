import type { APIRoute } from 'astro';
import { handle } from '../../../../lib/http/respond';
import { parseParams, IdParam } from '../../../../lib/http/parse';
import { requireFieldAction } from '../../../../lib/auth/fieldAccess';
import { appDb } from '../../../../lib/services/appDb';
import { queueFieldLinking } from '../../../../lib/services/fields/queueFieldLinking';

/** Queues linking of a registered field (analysts); progress shows on the field. */
export const POST = handle(async (ctx) => {
  const { id } = parseParams(ctx.params, IdParam);
  const db = await appDb();
  const { field } = await requireFieldAction(db, ctx.locals, id, 'field.analyse', 'link fields');
  return Response.json(await queueFieldLinking(db, field), { status: 202 });
}) satisfies APIRoute;
