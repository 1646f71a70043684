/**
 * Upload path against the real s3rver and PostgreSQL: presigned PUT → inspection → confirmation →
 * ingestion by the worker, and every bad-input case with its message and nothing half-saved.
 */
import { describe, expect } from 'vitest';
import { eq, count } from 'drizzle-orm';
import type { AppClient } from '../support/client';
import { writeTiff } from '../../src/lib/imaging';
import { setInline } from '../../src/lib/imaging/__tests__/tiffBytes';
import type { Db } from '../../src/lib/db/client';
import { fields, fieldFiles, samples } from '../../src/lib/db/schema';
import { createStorage, type Storage } from '../../src/lib/storage/client';
import { listKeys } from '../../src/lib/storage/objects';
import { makeDemoPair } from '../../fixtures/demoScene';
import { test, it } from '../support/fixtures';

let bio: AppClient;
let analyst: AppClient;
let db: Db;
let st: Storage;
let studyId: string;
let sampleId: string;

async function upload(c: AppClient, bytes: Uint8Array) {
  const presign = await c.json('/api/uploads', 'POST', { studyId, fileName: 'x.tif', sizeBytes: bytes.length });
  expect(presign.status).toBe(201);
  const { uploadId, url } = await presign.json();
  const put = await fetch(url, { method: 'PUT', body: Buffer.from(bytes), headers: { 'content-type': 'image/tiff' } });
  expect(put.status).toBe(200);
  const res = await c.json(`/api/uploads/${uploadId}/inspect`, 'POST', {});
  return { uploadId, res, body: await res.json() };
}

const stagedCount = async () => (await listKeys(st, 'staging/')).length;
const fieldCount = async () => (await db.select({ n: count() }).from(fields).where(eq(fields.sampleId, sampleId)))[0].n;

test.beforeAll(async ({ db: fileDb, signedIn }) => {
  bio = await signedIn('biologist');
  analyst = await signedIn('analyst');
  studyId = (await (await bio.fetch('/api/studies')).json()).studies[0].id;
  db = fileDb;
  st = createStorage({ endpoint: process.env.S3_ENDPOINT!, region: 'us-east-1', bucket: process.env.S3_BUCKET!, accessKeyId: 'S3RVER', secretAccessKey: 'S3RVER', forcePathStyle: true });
  const [s] = await db.insert(samples).values({ studyId, code: `UPL-${Date.now()}` }).returning();
  sampleId = s.id;
});

describe('paired upload', () => {
  it('uploads a pair, shows what was read, saves the field, and the worker renders its tiles', async () => {
    const pair = makeDemoPair({ seed: 5, afmSizePx: 256, flSizePx: 96, nbVesicles: 20 });
    const topo = await upload(bio, pair.topographyTiff);
    expect(topo.res.status).toBe(200);
    expect(topo.body).toMatchObject({ widthPx: 256, heightPx: 256, bitsPerSample: 32, sampleFormat: 'float', pageCount: 1, pixelSizeSource: 'ome-xml' });
    expect(topo.body.pixelSizeNm.x).toBeCloseTo(13, 9);
    const fl = await upload(bio, pair.fluorescenceTiff);
    expect(fl.body).toMatchObject({ widthPx: 96, heightPx: 96, bitsPerSample: 16, pageCount: 3, pixelSizeSource: 'resolution-tags' });
    expect(fl.body.pixelSizeNm.x).toBeCloseTo(65, 4);

    const create = await bio.json('/api/fields', 'POST', {
      sampleId, name: 'integration pair', topographyUploadId: topo.uploadId, fluorescenceUploadIds: [fl.uploadId],
      settings: { objectiveNa: 1.4, tipRadiusNm: 8 }, fileNames: { [topo.uploadId]: '../../etc/passwd.tif' },
    });
    expect(create.status).toBe(201);
    const { id } = await create.json();
    const files = await db.select().from(fieldFiles).where(eq(fieldFiles.fieldId, id));
    expect(files).toHaveLength(2);
    // keys are the server's own, never the file name
    for (const f of files) expect(f.objectKey).toMatch(new RegExp(`^fields/${id}/raw/[0-9a-f-]{36}\\.tif$`));
    expect(files.find((f) => f.kind === 'topography')!.originalName).toBe('.._.._etc_passwd.tif');
    // staged objects moved, not copied
    expect((await listKeys(st, 'staging/')).filter((k) => k.includes(topo.uploadId) || k.includes(fl.uploadId))).toEqual([]);

    let status = '';
    for (let i = 0; i < 120 && status !== 'ready'; i++) {
      const r = await (await bio.fetch(`/api/fields/${id}`)).json();
      status = r.field.status;
      if (status === 'failed') throw new Error(r.field.failureReason);
      await new Promise((res) => setTimeout(res, 500));
    }
    expect(status).toBe('ready');
    const detail = await (await bio.fetch(`/api/fields/${id}`)).json();
    expect(detail.layers.map((l: { layer: string }) => l.layer).sort()).toEqual(['ch0', 'ch1', 'ch2', 'height']);
    const dzi = await analyst.fetch(`/api/fields/${id}/tiles/height.dzi`);
    expect(dzi.status).toBe(200);
    expect(await dzi.text()).toContain('Width="256"');
    const tile = await analyst.fetch(`/api/fields/${id}/tiles/ch0_files/0/0_0.png`);
    expect(tile.headers.get('content-type')).toBe('image/png');
    expect(new Uint8Array(await tile.arrayBuffer()).slice(1, 4)).toEqual(new Uint8Array([0x50, 0x4e, 0x47]));
    const det = await (await analyst.fetch(`/api/fields/${id}/detection`)).json();
    // 20 vesicles were generated; the edge rule may drop one touching the border.
    expect(det.vesicles.length).toBeGreaterThanOrEqual(18);
    expect(det.fiducialCandidates.length).toBe(6);
    // the raw file key is not exposed
    expect(JSON.stringify(detail)).not.toContain('/raw/');
  });
});

describe('bad uploads: a clear message and nothing half-saved', () => {
  const small = () => writeTiff([{ data: new Uint16Array(64 * 64).fill(7), width: 64, height: 64 }], { bitsPerSample: 16, sampleFormat: 'uint' });

  it('refuses a file that is not a TIFF and deletes it', async () => {
    const before = await stagedCount();
    const r = await upload(bio, new TextEncoder().encode('%PDF-1.7 this is not an image'));
    expect(r.res.status).toBe(422);
    expect(r.body.error).toBe('not_tiff');
    expect(r.body.message.length).toBeGreaterThan(20);
    expect(await stagedCount()).toBe(before);
  });

  it('refuses a truncated TIFF', async () => {
    const bytes = small().slice(0, 200);
    const r = await upload(bio, bytes);
    expect(r.res.status).toBe(422);
    expect(['truncated', 'corrupt']).toContain(r.body.error);
  });

  it('refuses an unsupported compression', async () => {
    const r = await upload(bio, setInline(small(), 259, 34712)); // JPEG 2000 code, which we do not decode
    expect(r.res.status).toBe(422);
    expect(r.body.error).toBe('unsupported_compression');
  });

  it('refuses an image whose declared size exceeds the limit before decoding it', async () => {
    const huge = setInline(setInline(small(), 256, 60000), 257, 60000);
    const r = await upload(bio, huge);
    expect(r.res.status).toBe(422);
    expect(['too_large', 'truncated']).toContain(r.body.error);
  });

  it('refuses a file larger than the upload limit at presign time', async () => {
    const r = await bio.json('/api/uploads', 'POST', { studyId, fileName: 'big.tif', sizeBytes: 50 * 1024 ** 4 });
    expect(r.status).toBe(413);
    expect((await r.json()).message).toMatch(/limit/);
  });

  it('refuses a channel count that differs from the panel, and a missing pixel size, saving nothing', async () => {
    const before = await fieldCount();
    const topo = await upload(bio, small());
    const oneChannel = await upload(bio, small());
    const r1 = await bio.json('/api/fields', 'POST', { sampleId, name: 'bad', topographyUploadId: topo.uploadId, fluorescenceUploadIds: [oneChannel.uploadId], settings: { objectiveNa: 1.4, afmPixelNm: 10, flPixelNm: 65 } });
    expect(r1.status).toBe(422);
    const b1 = await r1.json();
    expect(b1.error).toBe('channel_count_mismatch');
    expect(b1.message).toContain('3');

    const stack = await upload(bio, writeTiff([0, 1, 2].map(() => ({ data: new Uint16Array(64 * 64), width: 64, height: 64 })), { bitsPerSample: 16, sampleFormat: 'uint' }));
    const r2 = await bio.json('/api/fields', 'POST', { sampleId, name: 'bad', topographyUploadId: topo.uploadId, fluorescenceUploadIds: [stack.uploadId], settings: { objectiveNa: 1.4 } });
    expect(r2.status).toBe(422);
    const b2 = await r2.json();
    expect(b2.error).toBe('pixel_size_missing');
    expect(b2.message).toMatch(/AFM pixel size in nm/);
    expect(await fieldCount()).toBe(before);
    expect(await listKeys(st, 'fields/')).not.toContainEqual(expect.stringContaining(topo.uploadId));
  });

  it('does not let another person inspect or use my upload', async ({ signedIn }) => {
    const mine = await upload(bio, small());
    const admin = await signedIn('admin');
    const r = await admin.json(`/api/uploads/${mine.uploadId}/inspect`, 'POST', {});
    expect(r.status).toBe(404);
  });
});
