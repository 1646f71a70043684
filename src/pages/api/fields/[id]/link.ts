import type { APIRoute } from 'astro';
import { handle } from '../../../../lib/http/respond';
import { parseParams, IdParam } from '../../../../lib/http/parse';
import { HttpError } from '../../../../lib/http/errors';
import { getDb } from '../../../../lib/db/client';
import { requireFieldAction } from '../../../../lib/auth/fieldAccess';
import { queueLinking } from '../../../../lib/jobs/enqueue';

/** Queues linking of a registered field (analysts); progress shows on the field. */
export const POST = handle(async (ctx) => {
  const { id } = parseParams(ctx.params, IdParam);
  const db = await getDb();
  const { field } = await requireFieldAction(db, ctx.locals, id, 'field.analyse', 'link fields');
  if (!['registered', 'linked'].includes(field.status)) {
    throw new HttpError(409, 'not_registered', field.status === 'approved' ? 'This field is approved; send it back before linking again.' : 'Save a registration for this field before linking it.');
  }
  await queueLinking(db, [id]);
  return Response.json({ id, queued: true }, { status: 202 });
}) satisfies APIRoute;
