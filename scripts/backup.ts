/**
 * `npm run backup -- --out DIR`: a consistent copy of everything Heightlight keeps.
 * - DIR/database.dump: pg_dump in custom format (one snapshot of the whole database);
 * - DIR/objects/<key>: every object of the bucket, streamed to a file;
 * - DIR/manifest.json: sizes and SHA-256 of the dump and of every object, checked by `npm run restore`.
 * The database is dumped first: a row in the dump then always has its object in the copy (objects are
 * only deleted after their rows), while objects written during the copy are merely extra.
 * Reads DATABASE_URL and S3_* like the app (src/lib/config.ts; defaults fit the embedded `npm start` setup).
 */
import { spawnSync } from 'node:child_process';
import { createHash } from 'node:crypto';
import { createReadStream, createWriteStream, existsSync, mkdirSync, readdirSync, writeFileSync, statSync } from 'node:fs';
import { dirname, join, resolve, sep } from 'node:path';
import { Transform } from 'node:stream';
import { pipeline } from 'node:stream/promises';
import type { Readable } from 'node:stream';
import { GetObjectCommand } from '@aws-sdk/client-s3';
import { findBinDir } from './lib/postgres';
import { cliArgs } from './lib/cliArgs';
import { config } from '../src/lib/config';
import { createStorage, type Storage } from '../src/lib/storage/client';
import { listPages } from '../src/lib/storage/objects';

export const MANIFEST_VERSION = 1;

export interface ManifestEntry { key: string; sizeBytes: number; sha256: string; contentType?: string }
export interface Manifest {
  version: number;
  createdAt: string;
  database: { file: string; sizeBytes: number; sha256: string; postgresBin: string };
  bucket: string;
  objects: ManifestEntry[];
}

/** Storage and database settings from the environment, with the embedded setup's defaults. */
export function settingsFromEnv() {
  const c = config();
  const storage = createStorage({
    endpoint: c.S3_ENDPOINT, region: c.S3_REGION, bucket: c.S3_BUCKET,
    accessKeyId: c.S3_ACCESS_KEY_ID, secretAccessKey: c.S3_SECRET_ACCESS_KEY, forcePathStyle: c.S3_FORCE_PATH_STYLE,
  });
  return { databaseUrl: c.DATABASE_URL, storage };
}

/** The PostgreSQL client tools' folder (pg_dump, pg_restore), from Debian's packages. */
export function pgTool(name: 'pg_dump' | 'pg_restore'): string {
  const bin = findBinDir();
  if (!bin || !existsSync(join(bin, name))) throw new Error(`${name} was not found under /usr/lib/postgresql/<version>/bin: install Debian's postgresql package.`);
  return join(bin, name);
}

/** Where an object's copy lives under DIR/objects; refuses keys that would leave that folder. */
export function objectPath(dir: string, key: string): string {
  const root = resolve(dir, 'objects');
  const p = resolve(root, key);
  if (!p.startsWith(root + sep) || key.endsWith('/')) throw new Error(`refusing the object key ${JSON.stringify(key)}: it does not map to a file under ${root}`);
  return p;
}

/** SHA-256 (hex) and size of a file. */
export async function hashFile(path: string): Promise<{ sha256: string; sizeBytes: number }> {
  const h = createHash('sha256');
  await pipeline(createReadStream(path), h);
  return { sha256: h.digest('hex'), sizeBytes: statSync(path).size };
}

/** Every key of the bucket, page by page. */
export async function* listAll(st: Storage): AsyncGenerator<string> {
  for await (const page of listPages(st)) for (const o of page) yield o.Key!;
}

/** Streams one object to `path`, hashing on the way. */
async function copyObjectToFile(st: Storage, key: string, path: string): Promise<ManifestEntry> {
  const r = await st.s3.send(new GetObjectCommand({ Bucket: st.bucket, Key: key }));
  const h = createHash('sha256');
  let sizeBytes = 0;
  const tap = new Transform({
    transform(chunk: Buffer, _enc, cb) {
      h.update(chunk);
      sizeBytes += chunk.length;
      cb(null, chunk);
    },
  });
  mkdirSync(dirname(path), { recursive: true });
  await pipeline(r.Body as Readable, tap, createWriteStream(path));
  return { key, sizeBytes, sha256: h.digest('hex'), ...(r.ContentType ? { contentType: r.ContentType } : {}) };
}

/**
 * Writes a backup of `databaseUrl` and the bucket of `st` into `outDir` (which must be empty or new).
 * @returns the manifest written to outDir/manifest.json
 * @throws Error when outDir is not empty, pg_dump fails or an object cannot be read
 */
export async function backup(opts: { databaseUrl: string; storage: Storage; outDir: string; log?: (m: string) => void }): Promise<Manifest> {
  const { databaseUrl, storage: st, outDir, log = () => undefined } = opts;
  const dir = resolve(outDir);
  if (existsSync(dir) && readdirSync(dir).length) throw new Error(`${dir} is not empty: choose a new folder for the backup.`);
  mkdirSync(dir, { recursive: true });

  // database: one snapshot, custom format (compressed, restorable table by table)
  const pgDump = pgTool('pg_dump');
  const dumpFile = join(dir, 'database.dump');
  log('dumping the database (pg_dump --format=custom) ...');
  const r = spawnSync(pgDump, ['--format=custom', '--file', dumpFile, '--dbname', databaseUrl], { encoding: 'utf8' });
  if (r.status !== 0) throw new Error(`pg_dump failed (${r.status}): ${r.stderr.trim()}`);
  const dump = await hashFile(dumpFile);

  // objects
  log(`copying the objects of bucket ${st.bucket} ...`);
  const objects: ManifestEntry[] = [];
  for await (const key of listAll(st)) objects.push(await copyObjectToFile(st, key, objectPath(dir, key)));

  const manifest: Manifest = {
    version: MANIFEST_VERSION,
    createdAt: new Date().toISOString(),
    database: { file: 'database.dump', ...dump, postgresBin: dirname(pgDump) },
    bucket: st.bucket,
    objects,
  };
  writeFileSync(join(dir, 'manifest.json'), JSON.stringify(manifest, null, 2));
  return manifest;
}

/** True when this file is the script node was started with (not imported). */
export const isMain = (url: string) => process.argv[1] !== undefined && resolve(process.argv[1]) === resolve(new URL(url).pathname);

if (isMain(import.meta.url)) {
  const usage = 'usage: npm run backup -- --out DIR';
  const { out } = cliArgs({ out: { type: 'string' } }, usage);
  if (!out) {
    console.error(usage);
    process.exit(2);
  }
  const { databaseUrl, storage } = settingsFromEnv();
  backup({ databaseUrl, storage, outDir: out, log: (m) => console.log(`[backup] ${m}`) })
    .then((m) => {
      const bytes = m.objects.reduce((n, o) => n + o.sizeBytes, 0);
      console.log(`[backup] done: database ${(m.database.sizeBytes / 1024).toFixed(0)} kB, ${m.objects.length} objects (${(bytes / 1024 ** 2).toFixed(1)} MB) in ${resolve(out)}`);
      process.exit(0);
    })
    .catch((e) => {
      console.error(`[backup] failed: ${(e as Error).message}`);
      process.exit(1);
    });
}
