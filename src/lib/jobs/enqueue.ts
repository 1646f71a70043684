import { getBoss } from './boss';
import { QUEUES } from './queues';
import { inArray, sql } from 'drizzle-orm';
import { config } from '../config';
import type { Db } from '../db/client';
import { fields } from '../db/schema';

/** Queues ingestion of a field (singleton per field while one is queued). */
export async function enqueueIngest(fieldId: string) {
  const boss = await getBoss(config().DATABASE_URL);
  return boss.send(QUEUES.ingestField, { fieldId }, { singletonKey: `ingest:${fieldId}` });
}

/** Queues linking of a field's vesicles to marker calls. */
export async function enqueueLink(fieldId: string) {
  const boss = await getBoss(config().DATABASE_URL);
  return boss.send(QUEUES.linkField, { fieldId }, { singletonKey: `link:${fieldId}` });
}

/** Shows "linking: queued" on the fields (so their progress bars start at once), then queues their linking. */
export async function queueLinking(db: Db, fieldIds: string[]) {
  if (!fieldIds.length) return;
  await db.update(fields).set({ progress: { stage: 'linking: queued', fraction: 0 }, failureReason: null, updatedAt: sql`now()` }).where(inArray(fields.id, fieldIds));
  for (const id of fieldIds) await enqueueLink(id);
}
