/** The whole demo seed, as `npm start` and `npm test` both run it: people, studies, samples and fields (the pilot's processing is scripts/lib/runPilot.ts). */
import { createDb } from '../../src/lib/db/client';
import { createStorage } from '../../src/lib/storage/client';
import { getBoss } from '../../src/lib/jobs/boss';
import { QUEUES } from '../../src/lib/jobs/queues';
import { seed } from '../seed';
import { seedDemoFields } from '../seedDemoFields';
import { seedPilot } from '../seedPilot';

/** @param o.pilot - also generate the demo pilot's fields and queue their ingestion (default true) */
export async function seedAll(env: Record<string, string>, log: (m: string) => void, o: { pilot?: boolean } = {}) {
  const db = createDb(env.DATABASE_URL, 2);
  try {
    await seed(db);
    // demo field files go into the bucket; their ingestion is queued for the worker
    const st = createStorage({ endpoint: env.S3_ENDPOINT, region: 'us-east-1', bucket: env.S3_BUCKET, accessKeyId: env.S3_ACCESS_KEY_ID, secretAccessKey: env.S3_SECRET_ACCESS_KEY, forcePathStyle: true });
    const boss = await getBoss(env.DATABASE_URL);
    const created = await seedDemoFields(db, st, (id) => boss.send(QUEUES.ingestField, { fieldId: id }));
    if (created.length) log(`queued ${created.length} demo field(s) for processing`);
    // the pilot study's fields: generated once (a few seconds each), then ingested by the worker; runPilot does the rest
    if (o.pilot ?? true) {
      const pilot = await seedPilot(db, st, (id) => boss.send(QUEUES.ingestField, { fieldId: id }), log);
      if (pilot.created.length) log(`queued ${pilot.created.length} demo pilot field(s) for processing`);
    }
  } finally {
    await db.$client.end();
  }
}
