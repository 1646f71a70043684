/**
 * Demo fields and studies for integration and browser tests, on the suite's shared database (the one the app
 * server and worker use). Each takes the file's client from the `db` fixture (tests/support/fixtures.ts).
 */
import { and, eq } from 'drizzle-orm';
import type { Db } from '../../src/lib/db/client';
import { fields, markerChannels, samples, studies, studyMembers } from '../../src/lib/db/schema';
import { randomUUID } from 'node:crypto';
import PgBoss from 'pg-boss';
import { createStorage } from '../../src/lib/storage/client';
import { QUEUES } from '../../src/lib/jobs/queues';
import { DEMO_FIELDS, insertDemoField } from '../../scripts/seedDemoFields';
import { DEMO_STUDY_NAME } from '../../scripts/seed';

/** Finds a seeded demo field and waits until the worker has processed it. */
export async function demoField(db: Db, code: string, name = 'grid A1', timeoutMs = 120_000) {
  const until = Date.now() + timeoutMs;
  while (Date.now() < until) {
    const [row] = await db.select({ id: fields.id, status: fields.status, failureReason: fields.failureReason }).from(fields)
      .innerJoin(samples, eq(samples.id, fields.sampleId)).where(and(eq(samples.code, code), eq(fields.name, name)));
    if (row && !['uploading', 'ingesting'].includes(row.status)) {
      if (row.status === 'failed') throw new Error(`demo field ${code} failed: ${row.failureReason}`);
      return row.id;
    }
    await new Promise((r) => setTimeout(r, 500));
  }
  throw new Error(`demo field ${code} was not processed within ${timeoutMs} ms`);
}

/**
 * A study of its own for one test: the demo study's marker panel and members (so the demo users keep their
 * roles) under a new name. Tests that change study-wide settings (positivity thresholds) use one, so other
 * test files linking the demo study at the same time are not affected.
 * @returns the new study's id
 */
export async function ownStudy(db: Db, label: string): Promise<string> {
  const [demo] = await db.select().from(studies).where(eq(studies.name, DEMO_STUDY_NAME));
  return db.transaction(async (tx) => {
    const [study] = await tx.insert(studies).values({ name: `${label} ${randomUUID().slice(0, 6)}`, description: 'test study' }).returning();
    const panel = await tx.select().from(markerChannels).where(eq(markerChannels.studyId, demo.id));
    await tx.insert(markerChannels).values(panel.map(({ id: _id, studyId: _s, ...c }) => ({ ...c, studyId: study.id })));
    const members = await tx.select().from(studyMembers).where(eq(studyMembers.studyId, demo.id));
    await tx.insert(studyMembers).values(members.map((m) => ({ studyId: study.id, userId: m.userId, role: m.role })));
    return study.id;
  });
}

/**
 * A field of its own for one test: a copy of a seeded demo field (same generator seed, so the same truth)
 * in a new sample (with the demo sample's group and control kind), ingested by npm test's worker. Tests
 * that change a field's registration, detection or status use one, so they do not depend on which other
 * test ran first. The sample goes into `studyId` (default: the demo study).
 * @returns the new field's id, once it is ready
 */
export async function ownDemoField(db: Db, code: string, label: string, timeoutMs = 120_000, studyId?: string): Promise<string> {
  const spec = DEMO_FIELDS.find((f) => f.code === code);
  if (!spec) throw new Error(`no demo field of sample ${code}`);
  const env = process.env as Record<string, string>;
  const boss = new PgBoss({ connectionString: env.DATABASE_URL, schedule: false, supervise: false });
  try {
    const st = createStorage({ endpoint: env.S3_ENDPOINT, region: 'us-east-1', bucket: env.S3_BUCKET, accessKeyId: env.S3_ACCESS_KEY_ID, secretAccessKey: env.S3_SECRET_ACCESS_KEY, forcePathStyle: true });
    const [demo] = await db.select().from(samples).where(eq(samples.code, code));
    const [sample] = await db.insert(samples).values({
      studyId: studyId ?? demo.studyId, code: `${label}-${randomUUID().slice(0, 6)}`, groupLabel: demo.groupLabel, controlKind: demo.controlKind,
    }).returning();
    const fieldId = await insertDemoField(db, st, { sampleId: sample.id, name: spec.name, seed: spec.seed, positiveFractions: spec.positiveFractions, filePrefix: label });
    await boss.start();
    await boss.send(QUEUES.ingestField, { fieldId });
    const until = Date.now() + timeoutMs;
    while (Date.now() < until) {
      const [row] = await db.select({ status: fields.status, failureReason: fields.failureReason }).from(fields).where(eq(fields.id, fieldId));
      if (row.status === 'failed') throw new Error(`field ${fieldId} failed: ${row.failureReason}`);
      if (row.status === 'ready') return fieldId;
      await new Promise((r) => setTimeout(r, 500));
    }
    throw new Error(`field ${fieldId} was not processed within ${timeoutMs} ms`);
  } finally {
    await boss.stop({ graceful: false }).catch(() => undefined);
  }
}
