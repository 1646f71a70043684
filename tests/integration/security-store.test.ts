/**
 * Issue 14, finding 1: the embedded object store refuses unsigned and mismatched requests as S3 does, presigned
 * upload URLs are bound to their key, size and type and live minutes, and what was inspected is what a field
 * gets. Against the S3 fake of npm test (behind its signature gate, scripts/lib/s3.ts), the app and PostgreSQL.
 */
import { describe, expect } from 'vitest';
import { createHash } from 'node:crypto';
import { eq } from 'drizzle-orm';
import type { AppClient } from '../support/client';
import type { Db } from '../../src/lib/db/client';
import { fieldFiles, samples } from '../../src/lib/db/schema';
import { createStorage, type Storage } from '../../src/lib/storage/client';
import { getBytes, putBytes, listKeys } from '../../src/lib/storage/objects';
import { makeDemoPair } from '../../fixtures/demoScene';
import { test, it } from '../support/fixtures';

const S3 = process.env.S3_ENDPOINT!;
const BUCKET = process.env.S3_BUCKET!;
let bio: AppClient;
let db: Db;
let st: Storage;
let studyId: string;
let sampleId: string;
const sha = (b: Uint8Array) => createHash('sha256').update(b).digest('hex');

async function presign(bytes: number) {
  const res = await bio.json('/api/uploads', 'POST', { studyId, fileName: 'x.tif', sizeBytes: bytes });
  expect(res.status).toBe(201);
  return (await res.json()) as { uploadId: string; url: string };
}
const put = (url: string, body: Uint8Array, type = 'image/tiff') => fetch(url, { method: 'PUT', body: Buffer.from(body), headers: { 'content-type': type } });

test.beforeAll(async ({ db: fileDb, signedIn }) => {
  bio = await signedIn('biologist');
  studyId = (await (await bio.fetch('/api/studies')).json()).studies[0].id;
  db = fileDb;
  st = createStorage({ endpoint: S3, region: 'us-east-1', bucket: BUCKET, accessKeyId: process.env.S3_ACCESS_KEY_ID ?? 'S3RVER', secretAccessKey: process.env.S3_SECRET_ACCESS_KEY ?? 'S3RVER', forcePathStyle: true });
  const [s] = await db.insert(samples).values({ studyId, code: `SEC-${Date.now()}` }).returning();
  sampleId = s.id;
});

describe('embedded object store', () => {
  it('refuses unsigned reads, writes, listings and deletions, and the app\'s own signed requests still work', async () => {
    const key = `security-probe/${Date.now()}.json`;
    await putBytes(st, key, '{"secret":1}', 'application/json');
    const unsigned: [string, Response][] = [
      ['GET object', await fetch(`${S3}/${BUCKET}/${key}`)],
      ['LIST', await fetch(`${S3}/${BUCKET}?list-type=2`)],
      ['PUT', await fetch(`${S3}/${BUCKET}/${key}`, { method: 'PUT', body: 'replaced' })],
      ['DELETE', await fetch(`${S3}/${BUCKET}/${key}`, { method: 'DELETE' })],
      ['list buckets', await fetch(`${S3}/`)],
    ];
    for (const [what, r] of unsigned) {
      const text = await r.text();
      expect(r.status, `${what}: ${text}`).toBe(403);
      expect(text, what).toContain('<Code>AccessDenied</Code>');
    }
    // a forged signature (right key id and scope, wrong secret) fails too
    const amzDate = new Date().toISOString().replace(/[-:]|\.\d{3}/g, '');
    const forged = await fetch(`${S3}/${BUCKET}/${key}`, {
      headers: {
        authorization: `AWS4-HMAC-SHA256 Credential=${process.env.S3_ACCESS_KEY_ID ?? 'S3RVER'}/${amzDate.slice(0, 8)}/us-east-1/s3/aws4_request, SignedHeaders=host;x-amz-content-sha256;x-amz-date, Signature=${'0'.repeat(64)}`,
        'x-amz-date': amzDate, 'x-amz-content-sha256': 'UNSIGNED-PAYLOAD',
      },
    });
    expect(forged.status).toBe(403);
    expect(await forged.text()).toContain('<Code>SignatureDoesNotMatch</Code>');
    expect(new TextDecoder().decode(await getBytes(st, key))).toBe('{"secret":1}');
  });

  it('binds a presigned upload URL to its key, size and type, and lets it live minutes', async () => {
    const body = new Uint8Array(2048).fill(7);
    const { url } = await presign(body.length);
    const expires = Number(new URL(url).searchParams.get('X-Amz-Expires'));
    expect(expires).toBeGreaterThan(0);
    expect(expires).toBeLessThanOrEqual(15 * 60);
    // another key: someone else's staged upload, or a field's results
    const other = url.replace(/staging\/[0-9a-f-]{36}\/[0-9a-f-]{36}\.tif/, `fields/${'0'.repeat(8)}-0000-0000-0000-${'0'.repeat(12)}/detection.json`);
    expect(other).not.toBe(url);
    expect((await put(other, body)).status).toBe(403);
    expect((await put(url, new Uint8Array(4096).fill(7))).status).toBe(403);
    expect((await put(url, body, 'text/html')).status).toBe(403);
    expect((await fetch(url)).status).toBe(403);
    expect((await put(url, body)).status).toBe(200);
  });

  it('gives a field the file that was inspected, even when the staged upload is replaced afterwards', async () => {
    const pair = makeDemoPair({ seed: 5, afmSizePx: 256, flSizePx: 96, nbVesicles: 20 });
    const topo = pair.topographyTiff;
    const tp = await presign(topo.length);
    expect((await put(tp.url, topo)).status).toBe(200);
    expect((await bio.json(`/api/uploads/${tp.uploadId}/inspect`, 'POST', {})).status).toBe(200);
    // the same URL, still within its minutes, sends other bytes of the same length
    const swapped = Uint8Array.from(topo);
    for (let i = swapped.length - 4096; i < swapped.length; i++) swapped[i] ^= 0xff;
    expect((await put(tp.url, swapped)).status).toBe(200);
    const fp = await presign(pair.fluorescenceTiff.length);
    expect((await put(fp.url, pair.fluorescenceTiff)).status).toBe(200);
    expect((await bio.json(`/api/uploads/${fp.uploadId}/inspect`, 'POST', {})).status).toBe(200);
    const create = await bio.json('/api/fields', 'POST', {
      sampleId, name: 'inspected copy', topographyUploadId: tp.uploadId, fluorescenceUploadIds: [fp.uploadId], settings: { objectiveNa: 1.4 },
    });
    expect(create.status).toBe(201);
    const { id } = await create.json();
    const [file] = await db.select().from(fieldFiles).where(eq(fieldFiles.fieldId, id)).then((r) => r.filter((f) => f.kind === 'topography'));
    expect(sha(await getBytes(st, file.objectKey))).toBe(sha(topo));
    expect((await listKeys(st, 'staging/')).filter((k) => k.includes(tp.uploadId))).toEqual([]);
  });
});
