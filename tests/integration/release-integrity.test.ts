/**
 * What collaborators rely on stays put: a failed field can be removed so its sample can be released (but
 * never an approved or released one), and a release keeps the registration figures its link runs were made
 * with after the field is registered again. Against the running app, its real PostgreSQL and s3rver; fields,
 * link runs and vesicles are written straight to the database (the analysis pipeline is tested elsewhere),
 * registrations, reviews, releases and removals go through the API.
 */
import { describe, expect, afterAll, beforeAll } from 'vitest';
import { randomUUID } from 'node:crypto';
import type { Db } from '../../src/lib/db/client';
import { createStorage } from '../../src/lib/storage/client';
import { listKeys, putBytes } from '../../src/lib/storage/objects';
import { detectionKey, fieldPrefix, rawFileKey, tilePrefix } from '../../src/lib/storage/keys';
import { summariseLinkRun } from '../../src/lib/db/queries/linkRunSummaries';
import type { AppClient } from '../support/client';
import { DEMO, ROLES, type DemoRole } from '../support/demo';
import { test, it } from '../support/fixtures';

const clients = {} as Record<DemoRole, AppClient>;
const st = createStorage({ endpoint: process.env.S3_ENDPOINT!, region: 'us-east-1', bucket: process.env.S3_BUCKET!, accessKeyId: 'S3RVER', secretAccessKey: 'S3RVER', forcePathStyle: true });
let db: Db;
let studyId: string;
let otherStudyId: string;
const run = Date.now().toString(36);
const sampleIds: string[] = [];

async function q<T = Record<string, unknown>>(text: string, params: unknown[] = []): Promise<T[]> {
  return (await db.$client.query(text, params)).rows as T[];
}

async function addSample(study: string, code: string) {
  const [s] = await q<{ id: string }>(`insert into samples (study_id, code, group_label) values ($1, $2, 'ri') returning id`, [study, code]);
  sampleIds.push(s.id);
  return s.id;
}

async function addField(sampleId: string, name: string, status: string) {
  const [f] = await q<{ id: string }>(
    `insert into fields (sample_id, name, status, afm_pixel_nm, fl_pixel_nm, failure_reason) values ($1, $2, $3, 3.9, 65, $4) returning id`,
    [sampleId, name, status, status === 'failed' ? 'The height map could not be read.' : null],
  );
  return f.id;
}

/** What ingestion leaves in the bucket: the raw file (with its field_files row), a tile and the detection JSON. */
async function addObjects(fieldId: string) {
  const fileId = randomUUID();
  const raw = rawFileKey(fieldId, fileId);
  await putBytes(st, raw, new Uint8Array([73, 73, 42, 0]), 'image/tiff');
  await putBytes(st, `${tilePrefix(fieldId, 'height')}_files/0/0_0.png`, new Uint8Array([1, 2, 3]), 'image/png');
  await putBytes(st, detectionKey(fieldId), '{"vesicles":[]}', 'application/json');
  await q(`insert into field_files (id, field_id, kind, object_key, original_name, size_bytes) values ($1, $2, 'topography', $3, 'scan.tif', 4)`, [fileId, fieldId, raw]);
  return listKeys(st, fieldPrefix(fieldId));
}

/**
 * A new current link run made with the field's latest registration (as the linking job records it),
 * with `n` vesicles, the first k CD9-positive; the field becomes "linked".
 */
async function link(fieldId: string, sampleId: string, n: number, k: number) {
  await q(`update link_runs set current = false where field_id = $1`, [fieldId]);
  const [lr] = await q<{ id: string }>(
    `insert into link_runs (field_id, registration_id, settings, summary)
     values ($1, (select id from registrations where field_id = $1 order by version desc limit 1), '{}', '{}') returning id`,
    [fieldId],
  );
  await q(
    `insert into vesicles (link_run_id, field_id, sample_id, index, x_afm_px, y_afm_px, height_nm, mean_height_nm, area_nm2, diameter_nm, volume_nm3, circularity, marker_bits, markers)
     select $1, $2, $3, i, 10, 10, 8, 4, 7854, 100, 80000, 0.9, case when i < $5 then 1 else 0 end,
            '[{"intensity":1,"snr":1,"amplitude":1,"spotDistancePx":null},{"intensity":2,"snr":1,"amplitude":1,"spotDistancePx":null},{"intensity":3,"snr":1,"amplitude":1,"spotDistancePx":null}]'
       from generate_series(0, $4 - 1) as i`,
    [lr.id, fieldId, sampleId, n, k],
  );
  await summariseLinkRun(db, lr.id);
  await q(`update fields set status = 'linked', version = version + 1 where id = $1`, [fieldId]);
  return lr.id;
}

async function fieldVersion(fieldId: string) {
  const [f] = await q<{ version: number }>(`select version from fields where id = $1`, [fieldId]);
  return f.version;
}

async function review(fieldId: string, decision: 'approved' | 'sent_back', comment = '') {
  const res = await clients.analyst.json(`/api/fields/${fieldId}/review`, 'POST', { decision, comment, expectedVersion: await fieldVersion(fieldId) });
  expect(res.status).toBe(200);
}

async function saveRegistration(fieldId: string, basedOnVersion: number, pairs: unknown[]) {
  const res = await clients.analyst.json(`/api/fields/${fieldId}/registration`, 'POST', { basedOnVersion, model: 'affine', pairs });
  expect(res.status).toBe(201);
  return (await res.json()) as { version: number; freNm: number; treNm: number | null };
}

const remove = async (c: AppClient, fieldId: string, expectedVersion?: number) =>
  c.json(`/api/fields/${fieldId}`, 'DELETE', { expectedVersion: expectedVersion ?? (await fieldVersion(fieldId)) });

/** Four fiducial pairs, one fluorescence coordinate 0.5 px off, so FRE is small and not zero. */
const square = [
  { afm: { x: 100, y: 100 }, fl: { x: 40, y: 40 } },
  { afm: { x: 600, y: 100 }, fl: { x: 120, y: 40 } },
  { afm: { x: 600, y: 600 }, fl: { x: 120, y: 120 } },
  { afm: { x: 100, y: 600 }, fl: { x: 40.5, y: 120 } },
];
/** Five pairs, two of them off by 1.5 px: a different registration with a larger FRE. */
const fivePairs = [
  { afm: { x: 100, y: 100 }, fl: { x: 41.5, y: 40 } },
  { afm: { x: 600, y: 100 }, fl: { x: 120, y: 40 } },
  { afm: { x: 600, y: 600 }, fl: { x: 120, y: 121.5 } },
  { afm: { x: 100, y: 600 }, fl: { x: 40, y: 120 } },
  { afm: { x: 350, y: 350 }, fl: { x: 80, y: 80 } },
];

test.beforeAll(async ({ db: fileDb, signedIn }) => {
  for (const role of ROLES) clients[role] = await signedIn(role);
  db = fileDb;
  [{ id: studyId }] = await q<{ id: string }>(`select id from studies where name like 'Harbour Clinic plasma EV pilot%'`);
  [{ id: otherStudyId }] = await q<{ id: string }>(`insert into studies (name) values ($1) returning id`, [`Release integrity other ${run}`]);
});

afterAll(async () => {
  await q(`delete from samples where id = any($1::uuid[])`, [sampleIds]);
  await q(`delete from studies where id = $1`, [otherStudyId]);
});

describe('removing a field', () => {
  let sampleId: string;
  let good: string;
  let failed: string;
  let goodKeys: string[];

  beforeAll(async () => {
    sampleId = await addSample(studyId, `RI1-${run}`);
    good = await addField(sampleId, 'A1', 'ready');
    goodKeys = await addObjects(good);
    await saveRegistration(good, 0, square);
    await link(good, sampleId, 20, 6);
    await review(good, 'approved');
    failed = await addField(sampleId, 'B2 broken', 'failed');
  });

  it('a failed field blocks the release, and the refusal names it', async () => {
    const res = await clients.biologist.fetch(`/api/samples/${sampleId}/release`, { method: 'POST' });
    expect(res.status).toBe(409);
    const body = await res.json();
    expect(body.message).toContain('1 of 2 field(s)');
    expect(body.message).toContain('B2 broken (failed)');
    expect(body.message).toContain('Remove field');
  });

  it('is refused to a collaborator and to a non-member, and nothing goes', async () => {
    const keys = await addObjects(failed);
    expect(keys).toHaveLength(3);
    const collab = await remove(clients.collaborator, failed);
    expect(collab.status).toBe(403);
    expect((await collab.json()).error).toBe('forbidden');
    const otherSample = await addSample(otherStudyId, `RIX-${run}`);
    const outsiderField = await addField(otherSample, 'X1', 'failed');
    for (const role of ['biologist', 'analyst'] as const) {
      const res = await remove(clients[role], outsiderField);
      expect(res.status).toBe(403);
      expect((await res.json()).error).toBe('forbidden');
    }
    expect(await q(`select 1 from fields where id = any($1::uuid[])`, [[failed, outsiderField]])).toHaveLength(2);
    expect(await listKeys(st, fieldPrefix(failed))).toEqual(keys);
  });

  it('is refused for a version the person did not see (409), and for an approved field (409)', async () => {
    const stale = await remove(clients.biologist, failed, (await fieldVersion(failed)) + 1);
    expect(stale.status).toBe(409);
    expect((await stale.json()).message).toContain('changed since you opened it');
    const res = await remove(clients.analyst, good);
    expect(res.status).toBe(409);
    const body = await res.json();
    expect(body.error).toBe('conflict');
    expect(body.message).toBe('Field A1 is approved, so it cannot be removed. Send it back first (on its field page) if it should not count.');
    expect(await q(`select 1 from fields where id = $1`, [good])).toHaveLength(1);
    expect(await listKeys(st, fieldPrefix(good))).toEqual(goodKeys);
  });

  it('removes a failed field: rows, objects, an audit entry; its neighbour keeps its objects; the sample can then be released', async () => {
    const page = await clients.biologist.fetch(`/fields/${failed}`);
    expect(await page.text()).toContain('Remove field');
    const res = await remove(clients.biologist, failed);
    expect(res.status).toBe(200);
    expect(await res.json()).toEqual({ removed: true, fieldId: failed, name: 'B2 broken', objectsRemoved: true });
    expect(await q(`select 1 from fields where id = $1`, [failed])).toHaveLength(0);
    expect(await q(`select 1 from field_files where field_id = $1`, [failed])).toHaveLength(0);
    expect(await listKeys(st, fieldPrefix(failed))).toEqual([]);
    expect(await listKeys(st, fieldPrefix(good))).toEqual(goodKeys);
    const audits = await q<{ actor_email: string; details: Record<string, unknown> }>(`select actor_email, details from audit_log where action = 'field.removed' and target_id = $1`, [failed]);
    expect(audits).toHaveLength(1);
    expect(audits[0].actor_email).toBe(DEMO.biologist);
    expect(audits[0].details).toMatchObject({ name: 'B2 broken', status: 'failed', sampleId, sampleCode: `RI1-${run}`, objectsRemoved: true });
    // a second attempt finds nothing
    expect((await remove(clients.biologist, failed, 1)).status).toBe(404);

    const rel = await clients.biologist.fetch(`/api/samples/${sampleId}/release`, { method: 'POST' });
    expect(rel.status).toBe(201);
    expect((await rel.json()).version).toBe(1);
    const shown = await (await clients.collaborator.fetch(`/api/samples/${sampleId}/results`)).json();
    expect(shown.vesicles).toBe(20);
    expect(shown.markers[0].count).toBe(6);
  });

  it('is refused for a field in a release, even after it was sent back (409); the page no longer offers it', async () => {
    await review(good, 'sent_back', 'Re-check the fiducials');
    expect((await q<{ status: string }>(`select status::text from fields where id = $1`, [good]))[0].status).toBe('registered');
    const res = await remove(clients.biologist, good);
    expect(res.status).toBe(409);
    expect((await res.json()).message).toBe(`Field A1 is part of released results of sample RI1-${run} (version 1), so it cannot be removed: collaborators rely on those numbers.`);
    expect(await q(`select 1 from fields where id = $1`, [good])).toHaveLength(1);
    expect(await listKeys(st, fieldPrefix(good))).toEqual(goodKeys);
    const page = await clients.biologist.fetch(`/fields/${good}`);
    expect(page.status).toBe(200);
    expect(await page.text()).not.toContain('Remove field');
  });
});

describe('a release keeps its registration figures', () => {
  it('after the field is registered again with other pairs, release v1 still shows v1 FRE, pairs and status', async () => {
    const sampleId = await addSample(studyId, `RI2-${run}`);
    const fieldId = await addField(sampleId, 'C3', 'ready');
    const v1 = await saveRegistration(fieldId, 0, square);
    expect(v1.version).toBe(1);
    await link(fieldId, sampleId, 12, 4);
    await review(fieldId, 'approved');
    const rel = await clients.analyst.fetch(`/api/samples/${sampleId}/release`, { method: 'POST' });
    expect(rel.status).toBe(201);

    type Row = { name: string; status: string; freNm: number | null; treNm: number | null; nbFiducials: number | null; registrationVersion: number | null; vesicles: number };
    const released = async () => {
      const res = await clients.collaborator.fetch(`/api/samples/${sampleId}/results`);
      expect(res.status).toBe(200);
      const body = await res.json();
      expect(body.release.version).toBe(1);
      return body.fields as Row[];
    };
    const before = await released();
    expect(before).toHaveLength(1);
    expect(before[0]).toMatchObject({ name: 'C3', status: 'approved', registrationVersion: 1, nbFiducials: 4, vesicles: 12 });
    expect(before[0].freNm).toBeCloseTo(v1.freNm, 3);

    // send back, register again with different pairs, link again: the lab's preview follows, release v1 does not
    await review(fieldId, 'sent_back', 'Use the central bead too');
    const v2 = await saveRegistration(fieldId, 1, fivePairs);
    expect(v2.version).toBe(2);
    expect(Math.abs(v2.freNm - v1.freNm)).toBeGreaterThan(1); // nm: a visibly different registration
    const afterRegistration = await released();
    expect(afterRegistration).toEqual(before);

    await link(fieldId, sampleId, 15, 9);
    const preview = (await (await clients.analyst.fetch(`/api/samples/${sampleId}/results?source=current`)).json()).fields as Row[];
    expect(preview[0]).toMatchObject({ status: 'linked', registrationVersion: 2, nbFiducials: 5, vesicles: 15 });
    expect(preview[0].freNm).toBeCloseTo(v2.freNm, 3);
    expect(await released()).toEqual(before);
  });
});
