/**
 * The services the thin routes call (src/lib/services), run against a real PostgreSQL database of this file's own:
 * the state transitions and transactions that used to live in routes. Each check reads the rows back, so a refused
 * operation is seen to change nothing and a done one to write exactly its rows and its audit entry.
 * Nothing here queues a job (the paths that would are covered through the app by detection-settings, linking and
 * positivity-settings tests); the refusals before a job is queued are checked here.
 */
import { describe, expect } from 'vitest';
import { randomUUID } from 'node:crypto';
import type { Db } from '../../src/lib/db/client';
import { HttpError } from '../../src/lib/http/errors';
import type { Actor } from '../../src/lib/http/actor';
import { recordReview } from '../../src/lib/services/fields/recordReview';
import { changeDetectionSettings } from '../../src/lib/services/fields/changeDetectionSettings';
import { retryField } from '../../src/lib/services/fields/retryField';
import { releaseSample } from '../../src/lib/services/samples/releaseSample';
import { createSample } from '../../src/lib/services/samples/createSample';
import { replacePanel } from '../../src/lib/services/studies/replacePanel';
import { setPositivity } from '../../src/lib/services/studies/setPositivity';
import { setCameraModel } from '../../src/lib/services/studies/setCameraModel';
import { relinkFields } from '../../src/lib/services/studies/relinkFields';
import { defaultDetectionSettings } from '../../src/lib/schemas/detectionSettings';
import { test, it } from '../support/fixtures';

let db: Db;
let by: Actor;
const tag = randomUUID().slice(0, 8);

async function q<T = Record<string, unknown>>(text: string, params: unknown[] = []): Promise<T[]> {
  return (await db.$client.query(text, params)).rows as T[];
}

/** The HttpError a call throws (fails the test when it does not throw one). */
async function refusal(p: Promise<unknown>): Promise<HttpError> {
  const e = await p.then(() => null, (err: unknown) => err);
  expect(e).toBeInstanceOf(HttpError);
  return e as HttpError;
}

async function newStudy(markers: string[] = ['CD9', 'CD63', 'CD81']): Promise<string> {
  const [{ id }] = await q<{ id: string }>(`insert into studies (name) values ($1) returning id`, [`Services ${tag} ${randomUUID().slice(0, 4)}`]);
  for (const [i, m] of markers.entries()) await q(`insert into marker_channels (study_id, channel_index, marker) values ($1, $2, $3)`, [id, i, m]);
  return id;
}

async function newSample(studyId: string): Promise<string> {
  const [{ id }] = await q<{ id: string }>(`insert into samples (study_id, code) values ($1, $2) returning id`, [studyId, `SV-${randomUUID().slice(0, 6)}`]);
  return id;
}

/** A field in `status` with `version`, optionally with a current link run; returns both ids. */
async function newField(sampleId: string, status: string, o: { version?: number; linkRun?: boolean; name?: string; progress?: unknown } = {}) {
  const [f] = await q<{ id: string }>(
    `insert into fields (sample_id, name, status, version, progress) values ($1, $2, $3, $4, $5) returning id`,
    [sampleId, o.name ?? `F-${randomUUID().slice(0, 4)}`, status, o.version ?? 3, o.progress === undefined ? null : JSON.stringify(o.progress)],
  );
  let linkRunId: string | null = null;
  if (o.linkRun) [{ id: linkRunId }] = await q<{ id: string }>(`insert into link_runs (field_id, settings, summary) values ($1, '{}', '{}') returning id`, [f.id]);
  return { fieldId: f.id, linkRunId };
}

const fieldRow = async (id: string) => (await q<{ status: string; version: number; detection_settings: unknown; failure_reason: string | null }>(
  `select status, version, detection_settings, failure_reason from fields where id = $1`, [id]))[0];
const auditOf = (targetId: string) => q<{ action: string; actor_id: string; actor_email: string; ip: string; details: Record<string, unknown> }>(
  `select action, actor_id, actor_email, ip, details from audit_log where target_id = $1 order by id`, [targetId]);

// a database of this file's own (copied from the migrated template); nothing goes through the app server
test.beforeAll(async ({ ownDb }) => {
  db = ownDb.db;
  const email = `services-${tag}@example.org`;
  const [u] = await q<{ id: string }>(`insert into users (email, name, role) values ($1, 'Service Tester', 'analyst') returning id`, [email]);
  by = { id: u.id, email, ip: '192.0.2.7' }; // 192.0.2.0/24: the documentation range (RFC 5737)
});

describe('recordReview: approve or send back, one transaction guarded by the version the reviewer saw', () => {
  it('approves a linked field: status, version + 1, a review row tied to the current link run, and the audit entry', async () => {
    const { fieldId, linkRunId } = await newField(await newSample(await newStudy()), 'linked', { version: 4, linkRun: true });
    const done = await recordReview(db, by, { id: fieldId, status: 'linked' }, { decision: 'approved', comment: 'clean', expectedVersion: 4 });
    expect(done).toEqual({ status: 'approved', version: 5 });
    expect(await fieldRow(fieldId)).toMatchObject({ status: 'approved', version: 5 });
    expect(await q(`select decision, comment, link_run_id, reviewed_by from field_reviews where field_id = $1`, [fieldId]))
      .toEqual([{ decision: 'approved', comment: 'clean', link_run_id: linkRunId, reviewed_by: by.id }]);
    expect(await auditOf(fieldId)).toEqual([{ action: 'field.approved', actor_id: by.id, actor_email: by.email, ip: by.ip, details: { comment: 'clean' } }]);
  });

  it('sends an approved field back to "registered" with its comment', async () => {
    const { fieldId } = await newField(await newSample(await newStudy()), 'approved', { version: 7, linkRun: true });
    const done = await recordReview(db, by, { id: fieldId, status: 'approved' }, { decision: 'sent_back', comment: 'CD63 frame out of focus', expectedVersion: 7 });
    expect(done).toEqual({ status: 'registered', version: 8 });
    expect((await auditOf(fieldId)).map((a) => [a.action, a.details])).toEqual([['field.sent_back', { comment: 'CD63 frame out of focus' }]]);
  });

  it('refuses a stale version, a field not linked, and a send-back without a comment, writing nothing', async () => {
    const { fieldId } = await newField(await newSample(await newStudy()), 'linked', { version: 4, linkRun: true });
    const stale = await refusal(recordReview(db, by, { id: fieldId, status: 'linked' }, { decision: 'approved', comment: '', expectedVersion: 3 }));
    expect([stale.status, stale.code]).toEqual([409, 'stale_version']);
    const notLinked = await refusal(recordReview(db, by, { id: fieldId, status: 'registered' }, { decision: 'approved', comment: '', expectedVersion: 4 }));
    expect([notLinked.status, notLinked.code, notLinked.message]).toEqual([409, 'conflict', 'Only a linked field can be approved.']);
    const noComment = await refusal(recordReview(db, by, { id: fieldId, status: 'linked' }, { decision: 'sent_back', comment: '', expectedVersion: 4 }));
    expect([noComment.status, noComment.code]).toEqual([400, 'validation_failed']);
    expect(await fieldRow(fieldId)).toMatchObject({ status: 'linked', version: 4 });
    expect(await q(`select 1 from field_reviews where field_id = $1`, [fieldId])).toEqual([]);
    expect(await auditOf(fieldId)).toEqual([]);
  });
});

describe('changeDetectionSettings: one guarded update, and the reason when it matches nothing', () => {
  const settings = defaultDetectionSettings(2);

  it('refuses an approved field, a field whose job runs, and a stale version; the field and its linking stay as they were', async () => {
    const sampleId = await newSample(await newStudy());
    const approved = await newField(sampleId, 'approved', { version: 5, linkRun: true });
    const busy = await newField(sampleId, 'linked', { version: 5, linkRun: true, progress: { stage: 'linking', fraction: 0.4 } });
    const stale = await newField(sampleId, 'linked', { version: 5, linkRun: true });
    const cases = [
      [approved.fieldId, 5, 'conflict', 'This field is approved; send it back before detecting vesicles again.'],
      [busy.fieldId, 5, 'conflict', 'This field is being processed; wait until the job has finished, then detect again.'],
      [stale.fieldId, 4, 'stale_version', 'The field changed since you opened this page; reload it, check the settings and detect again.'],
    ] as const;
    for (const [fieldId, expectedVersion, code, message] of cases) {
      const e = await refusal(changeDetectionSettings(db, by, fieldId, settings, expectedVersion));
      expect([e.status, e.code, e.message]).toEqual([409, code, message]);
      expect(await fieldRow(fieldId)).toMatchObject({ version: 5, detection_settings: null });
      expect(await q(`select current from link_runs where field_id = $1`, [fieldId])).toEqual([{ current: true }]);
      expect(await auditOf(fieldId)).toEqual([]);
    }
    expect((await fieldRow(busy.fieldId)).status).toBe('linked');
  });

  it('answers 404 for a field that does not exist', async () => {
    const e = await refusal(changeDetectionSettings(db, by, randomUUID(), settings, 1));
    expect([e.status, e.code]).toEqual([404, 'not_found']);
  });
});

describe('retryField', () => {
  it('refuses a field whose processing did not fail, leaving it unchanged', async () => {
    const { fieldId } = await newField(await newSample(await newStudy()), 'ready', { version: 2 });
    const e = await refusal(retryField(db, fieldId));
    expect([e.status, e.message]).toEqual([409, 'Only a field whose processing failed can be retried.']);
    expect(await fieldRow(fieldId)).toMatchObject({ status: 'ready', version: 2 });
  });
});

describe('releaseSample: every field approved and linked, versions counted per sample', () => {
  it('refuses a sample without fields, then one with a field not approved (named with its status)', async () => {
    const studyId = await newStudy();
    const sampleId = await newSample(studyId);
    const code = (await q<{ code: string }>(`select code from samples where id = $1`, [sampleId]))[0].code;
    const none = await refusal(releaseSample(db, by, { id: sampleId, code }, undefined));
    expect(none.message).toBe(`Sample ${code} has no fields yet; upload and analyse fields before releasing.`);
    await newField(sampleId, 'approved', { linkRun: true, name: 'A1' });
    await newField(sampleId, 'linked', { linkRun: true, name: 'B2' });
    const pending = await refusal(releaseSample(db, by, { id: sampleId, code }, undefined));
    expect([pending.status, pending.code]).toEqual([409, 'conflict']);
    expect(pending.message).toMatch(new RegExp(`^1 of 2 field\\(s\\) of sample ${code} are not approved yet: B2 \\(linked\\)\\. `));
    expect(await q(`select 1 from releases where sample_id = $1`, [sampleId])).toEqual([]);
    expect(await auditOf(sampleId)).toEqual([]);
  });

  it('releases version 1 with the current link runs, audits it, then refuses a second release from a stale view', async () => {
    const sampleId = await newSample(await newStudy());
    const code = (await q<{ code: string }>(`select code from samples where id = $1`, [sampleId]))[0].code;
    const a = await newField(sampleId, 'approved', { linkRun: true });
    const b = await newField(sampleId, 'approved', { linkRun: true });
    const release = await releaseSample(db, by, { id: sampleId, code }, 0);
    expect(release.version).toBe(1);
    expect([...release.linkRunIds].sort()).toEqual([a.linkRunId, b.linkRunId].sort());
    expect(await auditOf(sampleId)).toEqual([{
      action: 'sample.released', actor_id: by.id, actor_email: by.email, ip: by.ip,
      details: { version: 1, linkRunIds: release.linkRunIds, sampleCode: code },
    }]);
    // the person still saw "no release" (0): someone else's release came first
    const late = await refusal(releaseSample(db, by, { id: sampleId, code }, 0));
    expect(late.message).toBe(`Someone else released sample ${code} in the meantime. Reload to see the new version; release again only if the data changed.`);
    expect(await q(`select version from releases where sample_id = $1`, [sampleId])).toEqual([{ version: 1 }]);
  });
});

describe('replacePanel and setPositivity: transactions over the marker channels', () => {
  it('keeps a marker\'s positivity settings through a panel edit; a new marker starts at the default k', async () => {
    const studyId = await newStudy(['CD9', 'CD63']);
    await q(`update marker_channels set positivity_k = 4.5, manual_threshold_counts = 820 where study_id = $1 and marker = 'CD63'`, [studyId]);
    const panel = await replacePanel(db, by, studyId, [
      { marker: 'CD63', antibodyClone: 'H5C6', fluorophore: 'AF488', excitationNm: 488, emissionNm: 520 },
      { marker: 'CD81', antibodyClone: '', fluorophore: '', excitationNm: null, emissionNm: null },
    ]);
    expect(panel.map((c) => [c.channelIndex, c.marker, c.positivityK, c.manualThresholdCounts])).toEqual([[0, 'CD63', 4.5, 820], [1, 'CD81', 2.58, null]]);
    expect((await auditOf(studyId)).map((a) => [a.action, a.details])).toEqual([['panel.changed', { panel: ['CD63', 'CD81'] }]]);
  });

  it('refuses to change the number of channels once the study has fields, and keeps the panel', async () => {
    const studyId = await newStudy(['CD9', 'CD63']);
    await newField(await newSample(studyId), 'ready');
    const e = await refusal(replacePanel(db, by, studyId, [{ marker: 'CD9', antibodyClone: '', fluorophore: '', excitationNm: null, emissionNm: null }]));
    expect(e.message).toBe('This study already has 1 field(s) uploaded with 2 channel(s); the panel can be renamed or corrected but must keep 2 channel(s).');
    expect(await q(`select marker from marker_channels where study_id = $1 order by channel_index`, [studyId])).toEqual([{ marker: 'CD9' }, { marker: 'CD63' }]);
  });

  it('refuses an unknown marker without writing the valid ones; audits only the markers that changed', async () => {
    const studyId = await newStudy(['CD9', 'CD63', 'CD81']);
    const e = await refusal(setPositivity(db, by, studyId, [{ marker: 'CD9', positivityK: 5, manualThresholdCounts: null }, { marker: 'TSG101', positivityK: 3, manualThresholdCounts: null }]));
    expect([e.status, e.code, e.message]).toEqual([400, 'unknown_marker', '"TSG101" is not in this study\'s panel (CD9, CD63, CD81).']);
    expect(await q(`select positivity_k from marker_channels where study_id = $1 and marker = 'CD9'`, [studyId])).toEqual([{ positivity_k: 2.58 }]);

    const out = await setPositivity(db, by, studyId, [
      { marker: 'CD9', positivityK: 2.58, manualThresholdCounts: null }, // as it was (the default): not audited
      { marker: 'CD81', positivityK: 2.5, manualThresholdCounts: 1200 },
    ]);
    expect(out.markers.map((m) => [m.marker, m.positivityK, m.manualThresholdCounts])).toEqual([['CD9', 2.58, null], ['CD63', 2.58, null], ['CD81', 2.5, 1200]]);
    expect(out.fieldsLinkedWithOtherSettings).toEqual([]);
    expect((await auditOf(studyId)).map((a) => a.details)).toEqual([{
      positivity: [{ marker: 'CD81', from: { k: 2.58, manualThresholdCounts: null }, to: { k: 2.5, manualThresholdCounts: 1200 } }],
    }]);
    // the same settings again change nothing and write no audit entry
    await setPositivity(db, by, studyId, [{ marker: 'CD81', positivityK: 2.5, manualThresholdCounts: 1200 }]);
    expect(await auditOf(studyId)).toHaveLength(1);
  });
});

describe('setCameraModel, createSample and relinkFields', () => {
  it('stores the camera model and audits a change only', async () => {
    const studyId = await newStudy();
    const camera = { offsetCounts: 100, gainCountsPerPhoton: 2.2, readNoiseCounts: 1.6 };
    expect(await setCameraModel(db, by, studyId, camera)).toEqual(camera);
    expect(await setCameraModel(db, by, studyId, camera)).toEqual(camera);
    expect(await setCameraModel(db, by, studyId, null)).toBeNull();
    expect((await auditOf(studyId)).map((a) => a.details)).toEqual([{ camera: { from: null, to: camera } }, { camera: { from: camera, to: null } }]);
  });

  it('refuses a second sample with the same code in a study', async () => {
    const studyId = await newStudy();
    const sample = { code: 'EV-P07', groupLabel: 'plasma', source: '', isolationMethod: 'SEC', collectionDate: '2026-05-01', dilution: '', substrate: '', notes: '', controlKind: 'none' as const };
    const first = await createSample(db, by, studyId, sample);
    expect(first.warnings).toEqual([]);
    const e = await refusal(createSample(db, by, studyId, sample));
    expect([e.status, e.message]).toEqual([409, `This study already has a sample coded EV-P07.`]);
    expect(await q(`select count(*)::int as n from samples where study_id = $1`, [studyId])).toEqual([{ n: 1 }]);
  });

  it('relinks only fields of the study, and says why none can be when none is linked', async () => {
    const studyId = await newStudy();
    const sampleId = await newSample(studyId);
    const approved = await newField(sampleId, 'approved', { linkRun: true, name: 'F-approved' });
    const ready = await newField(sampleId, 'ready', { name: 'F-ready' });
    const elsewhere = await newField(await newSample(await newStudy()), 'linked', { linkRun: true });
    const missing = await refusal(relinkFields(db, studyId, [approved.fieldId, elsewhere.fieldId]));
    expect([missing.status, missing.message]).toEqual([404, '1 of the fields were not found in this study.']);
    const none = await refusal(relinkFields(db, studyId, [approved.fieldId, ready.fieldId, ready.fieldId]));
    expect(none.status).toBe(409);
    expect(none.message).toContain('F-approved is approved: send it back before linking again');
    expect(none.message).toContain('F-ready is not linked (status ready)');
  });
});
