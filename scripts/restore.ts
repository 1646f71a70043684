/**
 * `npm run restore -- --from DIR [--force]`: brings a backup made by `npm run backup` into an EMPTY
 * setup: pg_restore of DIR/database.dump into DATABASE_URL and PutObject of every DIR/objects/<key>
 * into S3_BUCKET (created when missing). Every file is checked against the manifest's SHA-256 before
 * anything is written. Refuses a database that has tables or a bucket that has objects, unless
 * --force (then tables are replaced and objects overwritten).
 */
import { spawnSync } from 'node:child_process';
import { createReadStream, existsSync, readFileSync } from 'node:fs';
import { join, resolve } from 'node:path';
import { CreateBucketCommand, HeadBucketCommand, PutObjectCommand } from '@aws-sdk/client-s3';
import pg from 'pg';
import { hashFile, isMain, objectPath, pgTool, settingsFromEnv, MANIFEST_VERSION, type Manifest } from './backup';
import type { Storage } from '../src/lib/storage/client';
import { listPages } from '../src/lib/storage/objects';
import { cliArgs } from './lib/cliArgs';

/** Thrown when the target is not empty or the backup does not match its manifest; nothing was written. */
export class RestoreRefused extends Error {}

/** Tables outside PostgreSQL's own schemas. */
async function countTables(databaseUrl: string): Promise<number> {
  const client = new pg.Client({ connectionString: databaseUrl });
  await client.connect();
  try {
    const r = await client.query(`SELECT count(*)::int AS n FROM information_schema.tables WHERE table_schema NOT IN ('pg_catalog', 'information_schema')`);
    return r.rows[0].n;
  } finally {
    await client.end();
  }
}

/** Whether the bucket exists and holds at least one object. */
async function bucketState(st: Storage): Promise<'missing' | 'empty' | 'has objects'> {
  try {
    await st.s3.send(new HeadBucketCommand({ Bucket: st.bucket }));
  } catch (e) {
    if ((e as { $metadata?: { httpStatusCode?: number } }).$metadata?.httpStatusCode === 404) return 'missing';
    throw e;
  }
  // the first page of the shared lister (ListObjects v1: s3rver's V2 listing fails on buckets beyond 1,000 objects)
  for await (const page of listPages(st)) return page.length > 0 ? 'has objects' : 'empty';
  return 'empty';
}

/** Reads DIR/manifest.json and checks every file against it. */
export async function verifyBackup(dir: string): Promise<Manifest> {
  const file = join(dir, 'manifest.json');
  if (!existsSync(file)) throw new RestoreRefused(`${dir} has no manifest.json: is it a folder written by npm run backup?`);
  const m = JSON.parse(readFileSync(file, 'utf8')) as Manifest;
  if (m.version !== MANIFEST_VERSION) throw new RestoreRefused(`manifest version ${m.version} is not supported (expected ${MANIFEST_VERSION}).`);
  const check = async (path: string, what: string, want: { sha256: string; sizeBytes: number }) => {
    if (!existsSync(path)) throw new RestoreRefused(`${what} is missing from the backup (${path}).`);
    const got = await hashFile(path);
    if (got.sha256 !== want.sha256 || got.sizeBytes !== want.sizeBytes) {
      throw new RestoreRefused(`${what} does not match the manifest (SHA-256 ${got.sha256.slice(0, 12)}…, ${got.sizeBytes} bytes; expected ${want.sha256.slice(0, 12)}…, ${want.sizeBytes} bytes): the backup is damaged.`);
    }
  };
  await check(join(dir, m.database.file), 'the database dump', m.database);
  for (const o of m.objects) await check(objectPath(dir, o.key), `object ${o.key}`, o);
  return m;
}

/**
 * Restores the backup in `fromDir` into `databaseUrl` and the bucket of `st`.
 * @returns the manifest that was restored
 * @throws RestoreRefused when the target is not empty (without `force`) or the backup is damaged
 */
export async function restore(opts: { databaseUrl: string; storage: Storage; fromDir: string; force?: boolean; log?: (m: string) => void }): Promise<Manifest> {
  const { databaseUrl, storage: st, force = false, log = () => undefined } = opts;
  const dir = resolve(opts.fromDir);

  // check everything before writing anything
  const m = await verifyBackup(dir);
  log(`backup verified: database dump and ${m.objects.length} objects match the manifest`);
  const tables = await countTables(databaseUrl);
  const bucket = await bucketState(st);
  if (!force && (tables > 0 || bucket === 'has objects')) {
    const what = [tables > 0 ? `the database already has ${tables} table(s)` : '', bucket === 'has objects' ? `bucket ${st.bucket} already has objects` : ''].filter(Boolean).join(' and ');
    throw new RestoreRefused(`Refusing to restore: ${what}. Restore into an empty database and bucket, or pass --force to replace what is there.`);
  }

  // database
  log('restoring the database (pg_restore) ...');
  const args = ['--no-owner', '--no-privileges', '--exit-on-error', '--single-transaction', ...(force && tables > 0 ? ['--clean', '--if-exists'] : []), '--dbname', databaseUrl, join(dir, m.database.file)];
  const r = spawnSync(pgTool('pg_restore'), args, { encoding: 'utf8' });
  if (r.status !== 0) throw new Error(`pg_restore failed (${r.status}): ${r.stderr.trim()}`);

  // objects
  if (bucket === 'missing') await st.s3.send(new CreateBucketCommand({ Bucket: st.bucket }));
  log(`uploading ${m.objects.length} objects to bucket ${st.bucket} ...`);
  for (const o of m.objects) {
    await st.s3.send(new PutObjectCommand({
      Bucket: st.bucket, Key: o.key, Body: createReadStream(objectPath(dir, o.key)), ContentLength: o.sizeBytes,
      ...(o.contentType ? { ContentType: o.contentType } : {}),
    }));
  }
  return m;
}

if (isMain(import.meta.url)) {
  const usage = 'usage: npm run restore -- --from DIR [--force]';
  const { from, force = false } = cliArgs({ from: { type: 'string' }, force: { type: 'boolean' } }, usage);
  if (!from) {
    console.error(usage);
    process.exit(2);
  }
  const { databaseUrl, storage } = settingsFromEnv();
  restore({ databaseUrl, storage, fromDir: from, force, log: (m) => console.log(`[restore] ${m}`) })
    .then((m) => {
      console.log(`[restore] done: database from ${m.createdAt} and ${m.objects.length} objects restored`);
      process.exit(0);
    })
    .catch((e) => {
      console.error(`[restore] ${e instanceof RestoreRefused ? '' : 'failed: '}${(e as Error).message}`);
      process.exit(e instanceof RestoreRefused ? 3 : 1);
    });
}
