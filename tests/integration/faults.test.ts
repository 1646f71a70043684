/**
 * Faults with the real services: PostgreSQL stopped and restarted under the running app, the object
 * store unreachable during field creation, and a worker killed in the middle of an ingestion job.
 */
import { describe, expect, afterAll } from 'vitest';
import { spawn, type ChildProcess } from 'node:child_process';
import { randomUUID } from 'node:crypto';
import { createServer } from 'node:net';
import { mkdtempSync, rmSync } from 'node:fs';
import { join } from 'node:path';
import { tmpdir } from 'node:os';
import type { APIContext } from 'astro';
import { eq, sql } from 'drizzle-orm';
import { DEMO } from '../support/demo';
import { clusterDir, findBinDir, runPg } from '../../scripts/lib/postgres';
import { startS3 } from '../../scripts/lib/s3';
import type { Db } from '../../src/lib/db/client';
import { fields, fieldFiles, samples, tileSets, users } from '../../src/lib/db/schema';
import { createStorage, type Storage } from '../../src/lib/storage/client';
import { listKeys, putBytes } from '../../src/lib/storage/objects';
import { stagingKey } from '../../src/lib/storage/keys';
import { createField } from '../../src/lib/uploads/createField';
import { FieldCreateRequest } from '../../src/lib/schemas/fields';
import { handle } from '../../src/lib/http/respond';
import { getBoss } from '../../src/lib/jobs/boss';
import { QUEUES } from '../../src/lib/jobs/queues';
import PgBoss from 'pg-boss';
import { makeDemoPair } from '../../fixtures/demoScene';
import { insertDemoField } from '../../scripts/seedDemoFields';
import { test, it } from '../support/fixtures';

const env = process.env as Record<string, string>;
const sleep = (ms: number) => new Promise((r) => setTimeout(r, ms));
let db: Db;

/** What no reply may ever contain: stack frames, SQL, server paths. */
function expectNoInternals(text: string) {
  expect(text).not.toMatch(/\bat \S+ \(|node_modules|SELECT |\/work\/|\/tmp\//);
}

let sampleId: string;

test.beforeAll(async ({ db: fileDb }) => {
  db = fileDb;
  // a sample of its own in the demo study, so the demo samples' results stay as seeded
  const [demo] = await db.select().from(samples).where(eq(samples.code, 'HCP-001'));
  const [s] = await db.insert(samples).values({ studyId: demo.studyId, code: `FAULTS-${Date.now()}` }).returning();
  sampleId = s.id;
});
afterAll(async () => {
  await (await getBoss(env.DATABASE_URL)).stop({ graceful: false }).catch(() => undefined);
});

describe('PostgreSQL restarts while the app runs', () => {
  const pgCtl = join(findBinDir()!, 'pg_ctl');
  const pgdata = clusterDir(join(env.HEIGHTLIGHT_DATA_DIR, 'postgres'));
  const start = () => runPg(pgCtl, ['-D', pgdata, '-l', join(pgdata, 'server.log'), '-w', '-t', '60', 'restart']);

  it('answers 503 JSON during the outage and recovers without an app restart', { timeout: 150_000 }, async ({ signedIn }) => {
    const c = await signedIn('biologist');
    expect((await c.fetch('/api/studies')).status).toBe(200);
    // Wait until no job is running: a worker whose job is mid-flight when PostgreSQL goes away
    // currently exits (pg-boss's fail() rejects unhandled), which would stop later files' ingestion.
    const idle = Date.now() + 90_000;
    while (Date.now() < idle && (await db.execute(sql`SELECT 1 FROM pgboss.job WHERE state = 'active'`)).rows.length) await sleep(500);
    runPg(pgCtl, ['-D', pgdata, '-m', 'fast', '-w', 'stop']);
    try {
      for (const path of ['/api/studies', '/api/me']) {
        const res = await c.fetch(path);
        const text = await res.text();
        expect(res.status, path).toBe(503);
        expect(res.headers.get('content-type')).toContain('application/json');
        const body = JSON.parse(text);
        expect(body.error).toBe('service_unavailable');
        expect(body.message).toMatch(/database is not reachable/);
        expectNoInternals(text);
      }
    } finally {
      // restart reuses the options the cluster was started with (postmaster.opts): port, socket folder
      start();
    }
    let status = 0;
    const until = Date.now() + 30_000;
    while (Date.now() < until && status !== 200) {
      status = (await c.fetch('/api/studies')).status;
      if (status !== 200) await sleep(500);
    }
    expect(status).toBe(200);
    const studies = (await (await c.fetch('/api/studies')).json()).studies;
    expect(studies.length).toBeGreaterThan(0);
  });
});

async function freePort(): Promise<number> {
  return new Promise((res, rej) => {
    const s = createServer();
    s.once('error', rej);
    s.listen(0, '127.0.0.1', () => {
      const { port } = s.address() as { port: number };
      s.close(() => res(port));
    });
  });
}

describe('the object store goes away during field creation', () => {
  it('fails with a retryable 503, leaves no rows and no objects, and works once the store is back', async () => {
    const port = await freePort();
    const dir = mkdtempSync(join(tmpdir(), 'hl-s3-fault-'));
    const settings = { port, directory: dir, bucket: 'fault', appOrigin: env.PUBLIC_URL };
    let s3 = await startS3(settings);
    const st: Storage = createStorage({ endpoint: `http://127.0.0.1:${port}`, region: 'us-east-1', bucket: 'fault', accessKeyId: 'S3RVER', secretAccessKey: 'S3RVER', forcePathStyle: true });
    const limits = { maxUploadBytes: 2 ** 30, maxPixels: 2 ** 26, maxDecodedBytes: 2 ** 30 };
    try {
      const [bio] = await db.select().from(users).where(eq(users.email, DEMO.biologist));
      const pair = makeDemoPair({ seed: 97, afmSizePx: 256, flSizePx: 96, nbVesicles: 15 });
      const topo = randomUUID();
      const fl = randomUUID();
      await putBytes(st, stagingKey(bio.id, topo), pair.topographyTiff, 'image/tiff');
      await putBytes(st, stagingKey(bio.id, fl), pair.fluorescenceTiff, 'image/tiff');
      const name = `fault probe ${randomUUID().slice(0, 8)}`;
      const body = FieldCreateRequest.parse({ sampleId, name, topographyUploadId: topo, fluorescenceUploadIds: [fl], settings: { objectiveNa: 1.4 } });

      await s3.stop();
      const route = handle(() => createField(db, st, bio.id, body, 3, limits).then((f) => Response.json(f, { status: 201 })));
      const ctx = { request: new Request('http://127.0.0.1/api/fields', { method: 'POST' }) } as unknown as APIContext;
      const res = await route(ctx);
      const text = await res.text();
      expect(res.status).toBe(503);
      const err = JSON.parse(text);
      expect(err.error).toBe('storage_unavailable');
      expect(err.message).toBe('The file store is not reachable right now; nothing was saved. Try again in a moment.');
      expectNoInternals(text);
      expect(await db.select().from(fields).where(eq(fields.name, name))).toEqual([]);

      // back up: nothing under fields/, the staged files are still there, and trying again works
      s3 = await startS3(settings);
      expect(await listKeys(st, 'fields/')).toEqual([]);
      expect((await listKeys(st, 'staging/')).sort()).toEqual([stagingKey(bio.id, topo), stagingKey(bio.id, fl)].sort());
      const again = await route(ctx);
      expect(again.status).toBe(201);
      const created = await again.json();
      expect(created.name).toBe(name);
      expect((await listKeys(st, `fields/${created.id}/`)).length).toBe(2);
      await db.delete(fieldFiles).where(eq(fieldFiles.fieldId, created.id));
      await db.delete(fields).where(eq(fields.id, created.id));
    } finally {
      await s3.stop();
      rmSync(dir, { recursive: true, force: true });
    }
  });
});

type JobRow = { id: string; state: string; retry_count: number };
const jobRow = async (schema: string, id: string) =>
  ((await db.execute(sql.raw(`SELECT id::text, state::text, retry_count FROM ${schema}.job WHERE id = '${id}'
    UNION ALL SELECT id::text, state::text, retry_count FROM ${schema}.archive WHERE id = '${id}'`))).rows as JobRow[])[0];

describe('a worker is killed in the middle of a job', () => {
  // Two workers with a queue schema of their own: npm test's worker never sees this job, so the
  // test knows which worker holds it (the one that says so) and kills exactly that one.
  const schema = `pgboss_kill_${randomUUID().slice(0, 8)}`;
  const workers: ChildProcess[] = [];
  let sender: PgBoss | undefined;
  afterAll(async () => {
    for (const w of workers) if (w.exitCode === null && w.signalCode === null) w.kill('SIGKILL');
    await sender?.stop({ graceful: false }).catch(() => undefined);
    await db.execute(sql.raw(`DROP SCHEMA IF EXISTS ${schema} CASCADE`));
  });

  /** Starts a worker on the test's queue schema; resolves once it waits for jobs. */
  async function startWorker(onLine: (w: ChildProcess, line: string) => void): Promise<ChildProcess> {
    const w = spawn(process.execPath, ['--import', 'tsx', 'scripts/worker.ts'], { env: { ...process.env, JOB_QUEUE_SCHEMA: schema }, stdio: ['ignore', 'pipe', 'inherit'] });
    workers.push(w);
    await new Promise<void>((res, rej) => {
      const t = setTimeout(() => rej(new Error('a worker did not start within 30 s')), 30_000);
      w.stdout!.on('data', (d: Buffer) => {
        for (const line of d.toString().split('\n')) {
          if (line.includes('waiting for jobs')) { clearTimeout(t); res(); }
          onLine(w, line);
        }
      });
    });
    return w;
  }

  it('the job is retried by the other worker and the field ends ready with one set of tiles', async () => {
    const st = createStorage({ endpoint: env.S3_ENDPOINT, region: 'us-east-1', bucket: env.S3_BUCKET, accessKeyId: env.S3_ACCESS_KEY_ID, secretAccessKey: env.S3_SECRET_ACCESS_KEY, forcePathStyle: true });
    const fieldId = await insertDemoField(db, st, { sampleId, name: 'worker kill 211', seed: 211, positiveFractions: [0.5, 0.4, 0.3], filePrefix: 'kill' });

    // The worker that announces the job is killed at once: the job is still active (its worker has
    // not reported it), however fast the machine is.
    let killed: ChildProcess | undefined;
    let announced!: () => void;
    const jobStarted = new Promise<void>((r) => { announced = r; });
    const onLine = (w: ChildProcess, line: string) => {
      if (!killed && line.includes(`ingesting field ${fieldId}`)) {
        killed = w;
        w.kill('SIGKILL');
        announced();
      }
    };
    // one after the other: the first creates the queue schema
    await startWorker(onLine);
    await startWorker(onLine);

    sender = new PgBoss({ connectionString: env.DATABASE_URL, schema, schedule: false, supervise: false });
    await sender.start();
    const jobId = (await sender.send(QUEUES.ingestField, { fieldId }))!;
    expect(jobId).toBeTruthy();
    await Promise.race([jobStarted, sleep(30_000).then(() => { throw new Error('no worker took the job within 30 s'); })]);
    await new Promise((r) => (killed!.exitCode !== null || killed!.signalCode !== null ? r(null) : killed!.once('exit', r)));
    expect((await jobRow(schema, jobId)).state, 'the job was still running when its worker died').toBe('active');

    // expiry (JOB_EXPIRE_SECONDS) + maintenance sweep + retry delay + a second ingestion by the other worker
    const done = Date.now() + 120_000;
    let status = '';
    let job: JobRow | undefined;
    while (Date.now() < done) {
      [{ status }] = await db.select({ status: fields.status }).from(fields).where(eq(fields.id, fieldId));
      job = await jobRow(schema, jobId);
      if (status !== 'ingesting' && job.state === 'completed') break;
      await sleep(1000);
    }
    expect(status).toBe('ready');
    expect(job?.state).toBe('completed');
    expect(job?.retry_count).toBe(1);

    // one set of tile_sets rows: height plus one per channel, no duplicates
    const sets = await db.select({ layer: tileSets.layer }).from(tileSets).where(eq(tileSets.fieldId, fieldId));
    expect(sets.map((x) => x.layer).sort()).toEqual(['ch0', 'ch1', 'ch2', 'height']);
  }, 200_000);
});
