import { and, eq, sql } from 'drizzle-orm';
import type { Db } from '../../db/client';
import { fields } from '../../db/schema';
import { conflict } from '../../http/errors';
import { enqueueIngest } from '../../jobs/enqueue';

/**
 * Moves a failed field back to "ingesting" and queues its ingestion again. One guarded update, so only a field that
 * is "failed" at that moment moves.
 * @throws HttpError 409 `conflict` for a field that has not failed
 */
export async function retryField(db: Db, fieldId: string) {
  const [row] = await db.update(fields).set({ status: 'ingesting', failureReason: null, progress: { stage: 'queued', fraction: 0 }, version: sql`${fields.version} + 1` })
    .where(and(eq(fields.id, fieldId), eq(fields.status, 'failed'))).returning({ id: fields.id });
  if (!row) throw conflict('Only a field whose processing failed can be retried.');
  await enqueueIngest(fieldId);
  return { id: fieldId, status: 'ingesting' as const };
}
