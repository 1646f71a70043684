import type { APIRoute } from 'astro';
import { handle } from '../../../../lib/http/respond';
import { parseParams, IdParam } from '../../../../lib/http/parse';
import { requireFieldAction } from '../../../../lib/auth/fieldAccess';
import { appDb } from '../../../../lib/services/appDb';
import { retryField } from '../../../../lib/services/fields/retryField';

/** Queues a failed field's ingestion again. */
export const POST = handle(async (ctx) => {
  const { id } = parseParams(ctx.params, IdParam);
  const db = await appDb();
  await requireFieldAction(db, ctx.locals, id, 'sample.write', 'retry processing');
  return Response.json(await retryField(db, id), { status: 202 });
}) satisfies APIRoute;
