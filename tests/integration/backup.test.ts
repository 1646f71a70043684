/**
 * Backup and restore against the real test services: `npm run backup` of a setup of this file's own (a database
 * copied from the suite's template and a bucket, holding one demo field's rows and raw files), then
 * `npm run restore` into a fresh database on the same PostgreSQL server and a fresh bucket on the
 * same s3rver; every table's row count and every object's SHA-256 must come back.
 */
import { describe, expect, afterAll } from 'vitest';
import { spawnSync } from 'node:child_process';
import { createHash } from 'node:crypto';
import { mkdtempSync, readFileSync, writeFileSync, rmSync } from 'node:fs';
import { join } from 'node:path';
import { tmpdir } from 'node:os';
import pg from 'pg';
import { CreateBucketCommand, DeleteObjectsCommand, DeleteBucketCommand } from '@aws-sdk/client-s3';
import { eq } from 'drizzle-orm';
import { createStorage, type Storage } from '../../src/lib/storage/client';
import { getBytes, listKeys } from '../../src/lib/storage/objects';
import type { Manifest } from '../../scripts/backup';
import { DEMO_FIELDS, insertDemoField } from '../../scripts/seedDemoFields';
import { samples } from '../../src/lib/db/schema';
import { test, it } from '../support/fixtures';

const env = process.env as Record<string, string>;
const n = `${Date.now()}_${process.pid}`;
const restoreDb = `heightlight_restore_${n}`;
const restoreBucket = `restore-${n}`.replace(/_/g, '-');
const sourceBucket = `backup-source-${n}`.replace(/_/g, '-');
const work = mkdtempSync(join(tmpdir(), 'hl-backup-test-'));
const out = join(work, 'backup');

const withDb = (url: string, name: string) => {
  const u = new URL(url);
  u.pathname = `/${name}`;
  return u.toString();
};
let sourceUrl: string;
const targetUrl = withDb(env.DATABASE_URL, restoreDb);
const storageFor = (bucket: string): Storage =>
  createStorage({ endpoint: env.S3_ENDPOINT, region: 'us-east-1', bucket, accessKeyId: env.S3_ACCESS_KEY_ID, secretAccessKey: env.S3_SECRET_ACCESS_KEY, forcePathStyle: true });

/** Runs a package script the way an operator would (`npm run backup -- ...`), with `extra` env. */
function npmRun(script: 'backup' | 'restore', args: string[], extra: Record<string, string> = {}) {
  const r = spawnSync('npm', ['run', '--silent', script, '--', ...args], { encoding: 'utf8', env: { ...process.env, ...extra }, timeout: 60_000 });
  return { code: r.status, out: `${r.stdout}\n${r.stderr}` };
}

async function query<T>(url: string, sql: string): Promise<T[]> {
  const c = new pg.Client({ connectionString: url });
  await c.connect();
  try {
    return (await c.query(sql)).rows as T[];
  } finally {
    await c.end();
  }
}

/** Exact row count of every table outside PostgreSQL's own schemas, keyed "schema.table". */
async function rowCounts(url: string): Promise<Record<string, number>> {
  const tables = await query<{ s: string; t: string }>(url, `SELECT table_schema AS s, table_name AS t FROM information_schema.tables
    WHERE table_type = 'BASE TABLE' AND table_schema NOT IN ('pg_catalog', 'information_schema') ORDER BY 1, 2`);
  const counts: Record<string, number> = {};
  const c = new pg.Client({ connectionString: url });
  await c.connect();
  for (const { s, t } of tables) counts[`${s}.${t}`] = (await c.query(`SELECT count(*)::int AS n FROM "${s}"."${t}"`)).rows[0].n;
  await c.end();
  return counts;
}

async function objectHashes(st: Storage): Promise<Record<string, string>> {
  const out: Record<string, string> = {};
  for (const key of await listKeys(st, '')) out[key] = createHash('sha256').update(await getBytes(st, key)).digest('hex');
  return out;
}

// The source is this file's own database and bucket: they hold still while we compare (the suite's worker and
// other files never write to them), and the backup copies one field's objects rather than the whole suite's.
test.beforeAll(async ({ ownDb }) => {
  sourceUrl = ownDb.url;
  const source = storageFor(sourceBucket);
  await source.s3.send(new CreateBucketCommand({ Bucket: sourceBucket }));
  const spec = DEMO_FIELDS.find((f) => f.code === 'HCP-001')!;
  const [sample] = await ownDb.db.select().from(samples).where(eq(samples.code, spec.code));
  await insertDemoField(ownDb.db, source, { sampleId: sample.id, name: spec.name, seed: spec.seed, positiveFractions: spec.positiveFractions, filePrefix: 'backup' });
  await query(withDb(env.DATABASE_URL, 'postgres'), `CREATE DATABASE ${restoreDb}`);
});

afterAll(async () => {
  await query(withDb(env.DATABASE_URL, 'postgres'), `DROP DATABASE IF EXISTS ${restoreDb} WITH (FORCE)`).catch(() => undefined);
  for (const bucket of [restoreBucket, sourceBucket]) {
    const st = storageFor(bucket);
    const keys = await listKeys(st, '').catch(() => [] as string[]);
    for (let i = 0; i < keys.length; i += 1000) {
      await st.s3.send(new DeleteObjectsCommand({ Bucket: bucket, Delete: { Objects: keys.slice(i, i + 1000).map((Key) => ({ Key })) } }));
    }
    await st.s3.send(new DeleteBucketCommand({ Bucket: bucket })).catch(() => undefined);
  }
  rmSync(work, { recursive: true, force: true });
});

describe('backup and restore', () => {
  it('restores every row and every object into an empty database and bucket', async () => {
    const source = storageFor(sourceBucket);
    const countsBefore = await rowCounts(sourceUrl);
    const hashesBefore = await objectHashes(source);
    expect(countsBefore['public.fields']).toBeGreaterThan(0);
    expect(Object.keys(hashesBefore).length).toBeGreaterThan(0);

    const b = npmRun('backup', ['--out', out], { DATABASE_URL: sourceUrl, S3_BUCKET: sourceBucket });
    expect(b.out).toContain('[backup] done');
    expect(b.code).toBe(0);
    const countsAfter = await rowCounts(sourceUrl);

    // the manifest lists every object with the hash of its bytes in the bucket
    const manifest = JSON.parse(readFileSync(join(out, 'manifest.json'), 'utf8')) as Manifest;
    expect(Object.fromEntries(manifest.objects.map((o) => [o.key, o.sha256]))).toEqual(hashesBefore);
    expect(manifest.database.sizeBytes).toBeGreaterThan(0);

    const r = npmRun('restore', ['--from', out], { DATABASE_URL: targetUrl, S3_BUCKET: restoreBucket });
    expect(r.out).toContain('[restore] done');
    expect(r.code).toBe(0);

    // every table: the restored count is the source's (the job queue's own tables may move while
    // the worker polls, so for a table that changed during the backup it lies between the two counts)
    const restored = await rowCounts(targetUrl);
    expect(Object.keys(restored).sort()).toEqual(Object.keys(countsBefore).sort());
    for (const [table, before] of Object.entries(countsBefore)) {
      const after = countsAfter[table];
      if (table.startsWith('public.')) expect({ table, n: after }).toEqual({ table, n: before });
      expect(restored[table], table).toBeGreaterThanOrEqual(Math.min(before, after));
      expect(restored[table], table).toBeLessThanOrEqual(Math.max(before, after));
    }
    expect(await objectHashes(storageFor(restoreBucket))).toEqual(hashesBefore);
  });

  it('refuses to restore over a database and bucket that hold data, and says how to proceed', () => {
    const r = npmRun('restore', ['--from', out], { DATABASE_URL: targetUrl, S3_BUCKET: restoreBucket });
    expect(r.code).not.toBe(0);
    expect(r.out).toMatch(/Refusing to restore: the database already has \d+ table\(s\) and bucket restore-\S+ already has objects/);
    expect(r.out).toContain('--force');
  });

  it('refuses a damaged backup before writing anything, even with --force', async () => {
    const manifest = JSON.parse(readFileSync(join(out, 'manifest.json'), 'utf8')) as Manifest;
    const victim = manifest.objects[0];
    const path = join(out, 'objects', victim.key);
    const bytes = readFileSync(path);
    bytes[0] ^= 0xff;
    writeFileSync(path, bytes);
    const countsBefore = await rowCounts(targetUrl);
    const r = npmRun('restore', ['--from', out, '--force'], { DATABASE_URL: targetUrl, S3_BUCKET: restoreBucket });
    expect(r.code).not.toBe(0);
    expect(r.out).toContain(`object ${victim.key} does not match the manifest`);
    expect(await rowCounts(targetUrl)).toEqual(countsBefore);
    expect(createHash('sha256').update(await getBytes(storageFor(restoreBucket), victim.key)).digest('hex')).toBe(victim.sha256);
  });
});
