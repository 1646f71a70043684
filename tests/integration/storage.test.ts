import { describe, it, expect } from 'vitest';
import { createStorage } from '../../src/lib/storage/client';
import { putBytes, listKeys, deleteOlderThan, getRange } from '../../src/lib/storage/objects';

const st = createStorage({ endpoint: process.env.S3_ENDPOINT!, region: 'us-east-1', bucket: process.env.S3_BUCKET!, accessKeyId: 'S3RVER', secretAccessKey: 'S3RVER', forcePathStyle: true });

describe('object store helpers against s3rver', () => {
  it('sweeps only the objects older than the cut-off under a prefix', async () => {
    const prefix = `staging/sweep-${Date.now()}/`;
    await putBytes(st, `${prefix}a.tif`, new Uint8Array([1, 2, 3]), 'image/tiff');
    await putBytes(st, `${prefix}b.tif`, new Uint8Array([4]), 'image/tiff');
    expect(await deleteOlderThan(st, prefix, new Date(Date.now() - 3600_000))).toBe(0);
    expect((await listKeys(st, prefix)).length).toBe(2);
    expect(await deleteOlderThan(st, prefix, new Date(Date.now() + 60_000))).toBe(2);
    expect(await listKeys(st, prefix)).toEqual([]);
  });

  it('reads byte ranges (used to inspect only a TIFF structure)', async () => {
    const key = `staging/range-${Date.now()}.bin`;
    await putBytes(st, key, Uint8Array.from({ length: 100 }, (_, i) => i), 'application/octet-stream');
    expect([...(await getRange(st, key, 10, 14))]).toEqual([10, 11, 12, 13]);
    expect([...(await getRange(st, key, 98, 100))]).toEqual([98, 99]);
  });
});
