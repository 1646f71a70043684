import { getBoss } from './boss';
import { QUEUES } from './queues';
import { config } from '../config';

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
