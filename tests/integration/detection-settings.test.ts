/**
 * Per-field detection settings through the app and the job worker, on a generated field whose truth is known:
 * 200 nm beads (a common bead size, common practice) are counted as vesicles under the 300 nm default cut-off and
 * become fiducial candidates under a 150 nm cut-off; a manual threshold drops the low vesicles; bad input, the wrong
 * role and an approved or busy field change nothing.
 */
import { describe, expect, afterAll } from 'vitest';
import { eq } from 'drizzle-orm';
import type { AppClient } from '../support/client';
import { BEAD_FIELD, beadFluorescence, beadScene, insertBeadField } from '../support/beadField';
import { applyAffine } from '../../src/lib/analysis/geometry';
import type { Db } from '../../src/lib/db/client';
import { fields, linkRuns, samples } from '../../src/lib/db/schema';
import type { FieldDetection } from '../../src/lib/jobs/detectionTypes';
import type { DetectionSettings } from '../../src/lib/schemas/detectionSettings';
import { test, it } from '../support/fixtures';

const AFM_NM = BEAD_FIELD.afmPixelNm;
const scene = beadScene();
const beads = scene.truth.filter((t) => t.kind === 'bead');
const truthVesicles = scene.truth.filter((t) => t.kind === 'vesicle');
const pair = beadFluorescence();

let db: Db;
let analyst: AppClient;
let biologist: AppClient;
let collaborator: AppClient;
let fieldId: string;
let sampleId: string;

const sleep = (ms: number) => new Promise((r) => setTimeout(r, ms));
const row = async () => (await db.select().from(fields).where(eq(fields.id, fieldId)))[0];
const detection = async (): Promise<FieldDetection> => {
  const r = await analyst.fetch(`/api/fields/${fieldId}/detection`);
  expect(r.status).toBe(200);
  return r.json();
};

/** Waits until the field's ingestion has finished; returns its status. */
async function processed(timeoutMs = 90_000): Promise<string> {
  const until = Date.now() + timeoutMs;
  while (Date.now() < until) {
    const f = await row();
    if (f.status === 'failed') throw new Error(`ingestion failed: ${f.failureReason}`);
    if (f.status !== 'ingesting' && (f.progress?.fraction ?? 1) >= 1) return f.status;
    await sleep(400);
  }
  throw new Error('the field was not processed in time');
}

async function detectAgain(settings: DetectionSettings | null) {
  const r = await analyst.json(`/api/fields/${fieldId}/detection-settings`, 'PUT', { settings, expectedVersion: (await row()).version });
  expect(r.status, await r.clone().text()).toBe(202);
  await processed();
  return detection();
}

const nearestBead = (p: { x: number; y: number }) => Math.min(...beads.map((b) => Math.hypot(b.xPx - p.x, b.yPx - p.y)));
const defaults = (): DetectionSettings => ({ threshold: { method: 'robust', k: 3 }, minHeightNm: 2, minAreaNm2: 9 * AFM_NM * AFM_NM, beadMinHeightNm: 300, levellingOrder: 1 });

test.beforeAll(async ({ db: fileDb, signedIn }) => {
  db = fileDb;
  [analyst, biologist, collaborator] = await Promise.all([
    signedIn('analyst'), signedIn('biologist'), signedIn('collaborator'),
  ]);
  // a sample of its own in the demo study, so the demo samples stay as seeded
  const [demo] = await db.select().from(samples).where(eq(samples.code, 'HCP-001'));
  const [s] = await db.insert(samples).values({ studyId: demo.studyId, code: `DETSET-${Date.now()}` }).returning();
  sampleId = s.id;
  fieldId = await insertBeadField(db, s.id, 'beads 200 nm');
  expect((await biologist.fetch(`/api/fields/${fieldId}/retry`, { method: 'POST' })).status).toBe(202);
  expect(await processed()).toBe('ready');
}, 150_000);
afterAll(async () => {
  if (sampleId) await db.delete(samples).where(eq(samples.id, sampleId));
});

describe('detection settings of a field', () => {
  let defaultVesicles = 0;

  it('without settings, the 300 nm default counts the 200 nm beads as vesicles and offers no fiducial candidates', async () => {
    const d = await detection();
    expect(d.settings).toEqual({ ...defaults(), minAreaPx: 9, source: 'defaults' });
    expect(d.fiducialCandidates).toHaveLength(0);
    const tall = d.vesicles.filter((v) => v.heightNm > 150);
    expect(tall).toHaveLength(beads.length);
    for (const v of tall) expect(nearestBead(v)).toBeLessThan(1);
    defaultVesicles = d.vesicles.length;
    expect(defaultVesicles).toBeGreaterThanOrEqual(beads.length + Math.floor(0.9 * truthVesicles.length));
  });

  it('a 150 nm bead cut-off makes exactly the beads fiducial candidates and stores the settings used', async () => {
    const settings = { ...defaults(), beadMinHeightNm: 150 };
    const d = await detectAgain(settings);
    expect((await row()).detectionSettings).toEqual(settings);
    expect(d.settings).toEqual({ ...settings, minAreaPx: 9, source: 'analyst' });
    expect(d.fiducialCandidates).toHaveLength(beads.length);
    for (const f of d.fiducialCandidates) {
      expect(nearestBead(f)).toBeLessThan(1);
      // a 200 nm sphere images 200 nm high (generator truth); the apex fit reads within 5 %
      expect(f.heightNm).toBeGreaterThan(190);
      expect(f.heightNm).toBeLessThan(210);
    }
    expect(d.vesicles).toHaveLength(defaultVesicles - beads.length);
    expect(await processed()).toBe('ready');
  }, 120_000);

  it('a manual threshold of 15 nm keeps only the taller vesicles', async () => {
    const d = await detectAgain({ ...defaults(), beadMinHeightNm: 150, threshold: { method: 'manual', thresholdNm: 15 } });
    expect(d.thresholdNm).toBe(15);
    expect(d.vesicles.length).toBeLessThan(defaultVesicles - beads.length);
    // bounds from the truth: no vesicle lower than the threshold (plus noise), and every one tall enough to leave a
    // top above 15 nm of at least the 9 px minimum area (a cap 25 nm high and 35 nm wide does, spherical-cap geometry)
    expect(d.vesicles.length).toBeLessThanOrEqual(truthVesicles.filter((v) => v.heightNm > 14).length);
    expect(d.vesicles.length).toBeGreaterThanOrEqual(truthVesicles.filter((v) => v.heightNm > 25).length);
    for (const v of d.vesicles) expect(v.heightNm).toBeGreaterThan(15);
    expect(d.fiducialCandidates).toHaveLength(beads.length);
  }, 120_000);

  it('refuses bad input with 400 and changes nothing', async () => {
    const before = await row();
    const bad = [
      { settings: { ...defaults(), threshold: { method: 'robust', k: 0.5 } }, expectedVersion: before.version },
      { settings: { ...defaults(), threshold: { method: 'manual', thresholdNm: -3 } }, expectedVersion: before.version },
      { settings: { ...defaults(), threshold: { method: 'mean' } }, expectedVersion: before.version },
      { settings: { ...defaults(), minAreaPx: 9 }, expectedVersion: before.version },
      { settings: { ...defaults(), beadMinHeightNm: '150' }, expectedVersion: before.version },
      { settings: defaults() },
    ];
    for (const body of bad) {
      const r = await analyst.json(`/api/fields/${fieldId}/detection-settings`, 'PUT', body);
      expect(r.status).toBe(400);
      const e = await r.json();
      expect(e.error).toBe('validation_failed');
      expect(e.message).toMatch(/^Check /);
    }
    const k = await (await analyst.json(`/api/fields/${fieldId}/detection-settings`, 'PUT', bad[0])).json();
    expect(k.message).toContain('k must be at least 1');
    const after = await row();
    expect({ v: after.version, s: after.status, d: after.detectionSettings }).toEqual({ v: before.version, s: before.status, d: before.detectionSettings });
  });

  it('refuses a biologist and a collaborator with 403', async () => {
    const before = await row();
    for (const c of [biologist, collaborator]) {
      const r = await c.json(`/api/fields/${fieldId}/detection-settings`, 'PUT', { settings: null, expectedVersion: before.version });
      expect(r.status).toBe(403);
    }
    expect((await row()).version).toBe(before.version);
  });

  it('refuses an approved field, a busy field and a stale version with 409', async () => {
    const before = await row();
    const put = (version = before.version) => analyst.json(`/api/fields/${fieldId}/detection-settings`, 'PUT', { settings: null, expectedVersion: version });
    await db.update(fields).set({ status: 'approved' }).where(eq(fields.id, fieldId));
    let r = await put();
    expect(r.status).toBe(409);
    expect((await r.json()).message).toMatch(/approved; send it back/);
    await db.update(fields).set({ status: 'linked', progress: { stage: 'linking: queued', fraction: 0 } }).where(eq(fields.id, fieldId));
    r = await put();
    expect(r.status).toBe(409);
    expect((await r.json()).message).toMatch(/being processed/);
    await db.update(fields).set({ status: before.status, progress: before.progress }).where(eq(fields.id, fieldId));
    r = await put(before.version - 1);
    expect(r.status).toBe(409);
    expect((await r.json()).error).toBe('stale_version');
    const after = await row();
    expect({ v: after.version, d: after.detectionSettings }).toEqual({ v: before.version, d: before.detectionSettings });
  });

  it('with a registration, detecting again returns the field to "registered"; null restores the defaults', async () => {
    const pairs = beads.map((b) => ({ afm: { x: b.xPx, y: b.yPx }, fl: applyAffine(pair.flFromAfm, { x: b.xPx, y: b.yPx }) }));
    const save = await analyst.json(`/api/fields/${fieldId}/registration`, 'POST', { basedOnVersion: 0, pairs });
    expect(save.status).toBe(201);
    expect((await row()).status).toBe('registered');
    // a link run of the old vesicles (as the linking job leaves it): no longer current once detection changes
    const [run] = await db.insert(linkRuns).values({ fieldId, settings: {}, summary: {}, current: true }).returning();
    const d = await detectAgain(null);
    const [runAfter] = await db.select().from(linkRuns).where(eq(linkRuns.id, run.id));
    expect(runAfter.current).toBe(false);
    expect(await processed()).toBe('registered');
    expect((await row()).detectionSettings).toBeNull();
    expect(d.settings?.source).toBe('defaults');
    expect(d.fiducialCandidates).toHaveLength(0);
    expect(d.vesicles).toHaveLength(defaultVesicles);
  }, 120_000);
});
