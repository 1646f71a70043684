/**
 * Mails of an ingestion job, with the real worker (scripts/worker.ts), pg-boss, PostgreSQL, s3rver and the
 * SMTP sink: a failure that a retry mends sends no failure mail, only the "processed" one; a failure on
 * every try sends exactly one failure mail, after the last try.
 */
import { describe, expect, afterAll } from 'vitest';
import { spawn, type ChildProcess } from 'node:child_process';
import { randomUUID } from 'node:crypto';
import { eq, sql } from 'drizzle-orm';
import PgBoss from 'pg-boss';
import type { Db } from '../../src/lib/db/client';
import { fields, fieldFiles, samples, users } from '../../src/lib/db/schema';
import { createStorage, type Storage } from '../../src/lib/storage/client';
import { deleteObject, getBytes, putBytes } from '../../src/lib/storage/objects';
import { QUEUES } from '../../src/lib/jobs/queues';
import { insertDemoField } from '../../scripts/seedDemoFields';
import { readSink } from '../../src/lib/mail/sinkReader';
import { waitForMail } from '../support/mailSink';
import { DEMO } from '../support/demo';
import { test, it } from '../support/fixtures';

const env = process.env as Record<string, string>;
const sleep = (ms: number) => new Promise((r) => setTimeout(r, ms));
// a database of this file's own (the worker below and the queue use it; nothing goes through the app server), and
// a queue schema of its own: npm test's worker never takes these jobs, so their retry settings hold
const schema = `pgboss_mail_${randomUUID().slice(0, 8)}`;
let db: Db;
let dbUrl: string;
let st: Storage;
let sampleId: string;
let uploaderId: string;
let worker: ChildProcess | undefined;
let sender: PgBoss | undefined;

test.beforeAll(async ({ ownDb }) => {
  ({ db, url: dbUrl } = ownDb);
  st = createStorage({ endpoint: env.S3_ENDPOINT, region: 'us-east-1', bucket: env.S3_BUCKET, accessKeyId: env.S3_ACCESS_KEY_ID, secretAccessKey: env.S3_SECRET_ACCESS_KEY, forcePathStyle: true });
  const [demo] = await db.select().from(samples).where(eq(samples.code, 'HCP-001'));
  const [s] = await db.insert(samples).values({ studyId: demo.studyId, code: `MAILS-${Date.now()}` }).returning();
  sampleId = s.id;
  [{ id: uploaderId }] = await db.select({ id: users.id }).from(users).where(eq(users.email, DEMO.biologist));

  worker = spawn(process.execPath, ['--import', 'tsx', 'scripts/worker.ts'], { env: { ...process.env, DATABASE_URL: dbUrl, JOB_QUEUE_SCHEMA: schema }, stdio: ['ignore', 'pipe', 'inherit'] });
  await new Promise<void>((res, rej) => {
    const t = setTimeout(() => rej(new Error('the worker did not start within 30 s')), 30_000);
    worker!.stdout!.on('data', (d: Buffer) => { if (d.toString().includes('waiting for jobs')) { clearTimeout(t); res(); } });
  });
  sender = new PgBoss({ connectionString: dbUrl, schema, schedule: false, supervise: false });
  await sender.start();
}, 60_000);

afterAll(async () => {
  if (worker && worker.exitCode === null && worker.signalCode === null) worker.kill('SIGTERM');
  await sender?.stop({ graceful: false }).catch(() => undefined);
});

/** A demo field of the test's sample whose height map object is taken away (a fault a retry can mend); its bytes and key. */
async function fieldWithoutHeightMap(name: string) {
  const fieldId = await insertDemoField(db, st, { sampleId, name, seed: 307, positiveFractions: [0.5, 0.4, 0.3], createdBy: uploaderId, filePrefix: 'mail' });
  const [topo] = await db.select().from(fieldFiles).where(eq(fieldFiles.fieldId, fieldId)).then((r) => r.filter((f) => f.kind === 'topography'));
  const bytes = await getBytes(st, topo.objectKey);
  await deleteObject(st, topo.objectKey);
  return { fieldId, key: topo.objectKey, bytes };
}

const jobState = async (id: string) =>
  ((await db.execute(sql.raw(`SELECT state::text AS state, retry_count FROM ${schema}.job WHERE id = '${id}'`))).rows as { state: string; retry_count: number }[])[0];

async function until<T>(what: string, ms: number, probe: () => Promise<T | undefined | false>): Promise<T> {
  const end = Date.now() + ms;
  while (Date.now() < end) {
    const v = await probe();
    if (v) return v;
    await sleep(250);
  }
  throw new Error(`${what} did not happen within ${ms} ms`);
}

const mailsAbout = async (name: string, subject: string) =>
  (await readSink(env.MAIL_SINK_DIR, 500)).filter((m) => m.to.includes(DEMO.biologist) && m.subject.includes(name) && m.subject.includes(subject));

describe('field ingestion mails', () => {
  it('a failure that the retry mends sends no failure mail, only the "processed" one', async () => {
    const name = `mail once ${randomUUID().slice(0, 6)}`;
    const { fieldId, key, bytes } = await fieldWithoutHeightMap(name);
    // retryDelay leaves time to put the object back between the tries
    const jobId = (await sender!.send(QUEUES.ingestField, { fieldId }, { retryLimit: 1, retryDelay: 6 }))!;
    await until('the first try failing', 60_000, async () => {
      const [f] = await db.select({ status: fields.status }).from(fields).where(eq(fields.id, fieldId));
      return f.status === 'failed';
    });
    await putBytes(st, key, bytes, 'image/tiff');
    const job = await until('the job completing', 90_000, async () => {
      const j = await jobState(jobId);
      return j && ['completed', 'failed'].includes(j.state) ? j : undefined;
    });
    expect(job.state).toBe('completed');
    expect(job.retry_count).toBe(1);
    const [f] = await db.select({ status: fields.status }).from(fields).where(eq(fields.id, fieldId));
    expect(f.status).toBe('ready');
    await waitForMail(DEMO.biologist, `Field ${name}`, 15_000);
    expect(await mailsAbout(name, 'is processed')).toHaveLength(1);
    expect(await mailsAbout(name, 'could not be processed')).toHaveLength(0);
  }, 180_000);

  it('a failure on every try sends one failure mail, after the last try', async () => {
    const name = `mail fail ${randomUUID().slice(0, 6)}`;
    const { fieldId } = await fieldWithoutHeightMap(name);
    const jobId = (await sender!.send(QUEUES.ingestField, { fieldId }, { retryLimit: 2, retryDelay: 1 }))!;
    const job = await until('the job failing for good', 90_000, async () => {
      const j = await jobState(jobId);
      return j && j.state === 'failed' ? j : undefined;
    });
    // three tries (retryLimit 2), each marked the field failed; the mail went out before the last try threw
    expect(job.retry_count).toBe(2);
    const mail = await waitForMail(DEMO.biologist, `Field ${name} (`, 15_000);
    expect(mail.subject).toContain('could not be processed');
    expect(mail.text).toMatch(/Processing of field .* failed: Processing failed:/);
    await sleep(1500); // a stray extra mail would have arrived by now
    expect(await mailsAbout(name, 'could not be processed')).toHaveLength(1);
    expect(await mailsAbout(name, 'is processed')).toHaveLength(0);
  }, 180_000);
});
