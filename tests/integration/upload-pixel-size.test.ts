/**
 * The server's pixel-size decision on field confirmation, against the real s3rver and PostgreSQL:
 * a typed value wins over the file's, and an uncalibrated resolution-tag value is refused.
 */
import { describe, expect } from 'vitest';
import { eq } from 'drizzle-orm';
import type { AppClient } from '../support/client';
import { writeTiff } from '../../src/lib/imaging';
import type { Db } from '../../src/lib/db/client';
import { fields, samples } from '../../src/lib/db/schema';
import { makeDemoPair } from '../../fixtures/demoScene';
import { test, it } from '../support/fixtures';

let bio: AppClient;
let db: Db;
let studyId: string;
let sampleId: string;

async function upload(bytes: Uint8Array) {
  const presign = await bio.json('/api/uploads', 'POST', { studyId, fileName: 'x.tif', sizeBytes: bytes.length });
  const { uploadId, url } = await presign.json();
  expect((await fetch(url, { method: 'PUT', body: Buffer.from(bytes), headers: { 'content-type': 'image/tiff' } })).status).toBe(200);
  const res = await bio.json(`/api/uploads/${uploadId}/inspect`, 'POST', {});
  expect(res.status).toBe(200);
  return uploadId as string;
}

test.beforeAll(async ({ db: fileDb, signedIn }) => {
  bio = await signedIn('biologist');
  studyId = (await (await bio.fetch('/api/studies')).json()).studies[0].id;
  db = fileDb;
  const [s] = await db.insert(samples).values({ studyId, code: `PXS-${Date.now()}` }).returning();
  sampleId = s.id;
});

describe('pixel size on field confirmation', () => {
  const pair = makeDemoPair({ seed: 21, afmSizePx: 192, flSizePx: 64, nbVesicles: 5 });
  // 1 inch / 72 = 352 777.8 nm per pixel (TIFF 6.0 section 8, ResolutionUnit 2 = inch)
  const dpi72 = () => writeTiff([{ data: new Float32Array(64 * 64).fill(1), width: 64, height: 64 }], { bitsPerSample: 32, sampleFormat: 'float', resolution: { x: 72, y: 72, unit: 'inch' } });

  it('refuses a 72 px/inch height map without a typed AFM pixel size, saying why', async () => {
    const r = await bio.json('/api/fields', 'POST', {
      sampleId, name: 'dpi72', topographyUploadId: await upload(dpi72()), fluorescenceUploadIds: [await upload(pair.fluorescenceTiff)], settings: { objectiveNa: 1.4 },
    });
    expect(r.status).toBe(422);
    const b = await r.json();
    expect(b.error).toBe('pixel_size_missing');
    expect(b.message).toContain('72 pixels per inch');
    expect(b.message).toContain('Enter the AFM pixel size in nm');
  });

  it('saves a typed pixel size over the file\'s (OME-XML 13 nm, typed 10 nm; tags 65 nm, typed 70 nm)', async () => {
    const r = await bio.json('/api/fields', 'POST', {
      sampleId, name: 'typed wins', topographyUploadId: await upload(pair.topographyTiff), fluorescenceUploadIds: [await upload(pair.fluorescenceTiff)],
      settings: { objectiveNa: 1.4, afmPixelNm: 10, flPixelNm: 70 },
    });
    expect(r.status).toBe(201);
    const [row] = await db.select().from(fields).where(eq(fields.id, (await r.json()).id));
    expect(row.afmPixelNm).toBe(10);
    expect(row.flPixelNm).toBe(70);
    expect(row.afmScanSizeNm).toBe(10 * 192);
  });

  it('uses the file\'s plausible pixel size when none is typed', async () => {
    const r = await bio.json('/api/fields', 'POST', {
      sampleId, name: 'from file', topographyUploadId: await upload(pair.topographyTiff), fluorescenceUploadIds: [await upload(pair.fluorescenceTiff)], settings: { objectiveNa: 1.4 },
    });
    expect(r.status).toBe(201);
    const [row] = await db.select().from(fields).where(eq(fields.id, (await r.json()).id));
    expect(row.afmPixelNm).toBeCloseTo(13, 9);
    expect(row.flPixelNm).toBeCloseTo(65, 4);
  });
});
