import type { APIRoute } from 'astro';
import { eq, and, sql } from 'drizzle-orm';
import { handle } from '../../../../lib/http/respond';
import { parseParams, IdParam } from '../../../../lib/http/parse';
import { conflict } from '../../../../lib/http/errors';
import { getDb } from '../../../../lib/db/client';
import { fields } from '../../../../lib/db/schema';
import { requireFieldAction } from '../../../../lib/auth/fieldAccess';
import { enqueueIngest } from '../../../../lib/jobs/enqueue';

/** Queues a failed field's ingestion again. */
export const POST = handle(async (ctx) => {
  const { id } = parseParams(ctx.params, IdParam);
  const db = await getDb();
  await requireFieldAction(db, ctx.locals, id, 'sample.write', 'retry processing');
  const [row] = await db.update(fields).set({ status: 'ingesting', failureReason: null, progress: { stage: 'queued', fraction: 0 }, version: sql`${fields.version} + 1` })
    .where(and(eq(fields.id, id), eq(fields.status, 'failed'))).returning({ id: fields.id });
  if (!row) throw conflict('Only a field whose processing failed can be retried.');
  await enqueueIngest(id);
  return Response.json({ id, status: 'ingesting' }, { status: 202 });
}) satisfies APIRoute;
