import { eq, sql } from 'drizzle-orm';
import type { Db } from '../db/client';
import { fields } from '../db/schema';

/** Records a job's stage and fraction done on the field, for the progress bar the user sees. */
export async function setFieldProgress(db: Db, fieldId: string, stage: string, fraction: number) {
  await db.update(fields).set({ progress: { stage, fraction: Math.max(0, Math.min(1, fraction)) }, updatedAt: sql`now()` }).where(eq(fields.id, fieldId));
}

/** Marks a field failed with a reason a person can act on. */
export async function failField(db: Db, fieldId: string, reason: string) {
  await db
    .update(fields)
    .set({ status: 'failed', failureReason: reason, progress: null, version: sql`${fields.version} + 1`, updatedAt: sql`now()` })
    .where(eq(fields.id, fieldId));
}
