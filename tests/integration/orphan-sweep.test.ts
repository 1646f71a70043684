/**
 * The worker's hourly sweep of field objects without a field row (src/lib/jobs/sweepOrphanObjects.ts),
 * against the real PostgreSQL and s3rver: an old orphan prefix goes; a prefix whose row exists and a
 * fresh orphan (younger than the cut-off, as during createField's copies) stay.
 */
import { describe, expect } from 'vitest';
import { randomUUID } from 'node:crypto';
import type { Db } from '../../src/lib/db/client';
import { createStorage } from '../../src/lib/storage/client';
import { deleteKeys, listKeys, listPages, listSubPrefixes, putBytes } from '../../src/lib/storage/objects';
import { sweepOrphanObjects } from '../../src/lib/jobs/sweepOrphanObjects';
import { test, it } from '../support/fixtures';

const env = process.env as Record<string, string>;
const st = createStorage({ endpoint: env.S3_ENDPOINT, region: 'us-east-1', bucket: env.S3_BUCKET, accessKeyId: 'S3RVER', secretAccessKey: 'S3RVER', forcePathStyle: true });
const sleep = (ms: number) => new Promise((r) => setTimeout(r, ms));
let db: Db;

test.beforeAll(async ({ db: fileDb }) => {
  db = fileDb;
});

describe('sweepOrphanObjects', () => {
  it('removes an old fields/<id>/ prefix without a row and keeps owned, fresh and non-field prefixes', async () => {
    const owned = (await db.$client.query<{ id: string }>('select id::text as id from fields limit 1')).rows[0].id;
    const orphan = randomUUID();
    const fresh = randomUUID();
    const ownedKey = `fields/${owned}/sweep-probe-${Date.now()}.txt`;
    const rawOnly = randomUUID(); // what an interrupted createField leaves: raw copies, one level down
    const orphanKeys = [`fields/${orphan}/raw/${randomUUID()}.tif`, `fields/${orphan}/tiles/height/0/0_0.png`, `fields/${orphan}/detection.json`, `fields/${rawOnly}/raw/${randomUUID()}.tif`];
    const strayKey = `fields/not-a-field-id/${Date.now()}.txt`;
    for (const k of [ownedKey, ...orphanKeys, strayKey]) await putBytes(st, k, new Uint8Array([1, 2, 3]), 'application/octet-stream');
    // an orphan with a full tile pyramid: more than one 1,000-key listing page and DeleteObjects batch
    const big = randomUUID();
    const bigKeys = Array.from({ length: 1050 }, (_, i) => `fields/${big}/tiles/ch0/${Math.floor(i / 100)}/${i % 100}_0.png`);
    for (let i = 0; i < bigKeys.length; i += 25) await Promise.all(bigKeys.slice(i, i + 25).map((k) => putBytes(st, k, new Uint8Array([7]), 'image/png')));

    // the cut-off falls between the "old" objects and the fresh orphan (gaps > 1 s cover second-resolution timestamps)
    await sleep(1200);
    const cutOff = new Date();
    await sleep(1200);
    await putBytes(st, `fields/${fresh}/raw/${randomUUID()}.tif`, new Uint8Array([4]), 'image/tiff');

    // the folder listing must match the folders of a full key listing, including raw-only ones
    const subPrefixes: string[] = [];
    for await (const p of listSubPrefixes(st, 'fields/')) subPrefixes.push(p);
    const allKeys: string[] = [];
    for await (const page of listPages(st, 'fields/')) allKeys.push(...page.map((o) => o.Key!));
    expect(allKeys.length).toBeGreaterThan(1000); // more than one listing page
    const fromKeys = [...new Set(allKeys.map((k) => k.slice(0, k.indexOf('/', 'fields/'.length) + 1)))].sort();
    expect(subPrefixes).toEqual(fromKeys);
    expect(subPrefixes).toEqual(expect.arrayContaining([`fields/${owned}/`, `fields/${orphan}/`, `fields/${rawOnly}/`, `fields/${fresh}/`, 'fields/not-a-field-id/']));

    const r = await sweepOrphanObjects(db, st, cutOff);
    expect(r.prefixes).toEqual(expect.arrayContaining([`fields/${orphan}/`, `fields/${rawOnly}/`, `fields/${big}/`]));
    expect(r.prefixes).not.toContain(`fields/${owned}/`);
    expect(r.prefixes).not.toContain(`fields/${fresh}/`);
    expect(r.objects).toBeGreaterThanOrEqual(orphanKeys.length + bigKeys.length);
    expect(await listKeys(st, `fields/${big}/`)).toEqual([]);

    expect(await listKeys(st, `fields/${orphan}/`)).toEqual([]);
    expect(await listKeys(st, `fields/${rawOnly}/`)).toEqual([]);
    expect(await listKeys(st, `fields/${owned}/`)).toContain(ownedKey);
    expect((await listKeys(st, `fields/${fresh}/`)).length).toBe(1);
    expect(await listKeys(st, 'fields/not-a-field-id/')).toContain(strayKey);

    // once the fresh orphan is older than a later cut-off, it goes too; the owned prefix still stays
    const r2 = await sweepOrphanObjects(db, st, new Date(Date.now() + 1000));
    expect(r2.prefixes).toContain(`fields/${fresh}/`);
    expect(r2.prefixes).not.toContain(`fields/${owned}/`);
    expect(await listKeys(st, `fields/${fresh}/`)).toEqual([]);
    expect(await listKeys(st, `fields/${owned}/`)).toContain(ownedKey);

    await deleteKeys(st, [ownedKey, strayKey]);
  });
});
