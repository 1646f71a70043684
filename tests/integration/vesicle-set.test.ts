/**
 * One vesicle set, through the app and the job worker on a realistic correlative field (makeCorrelativeScene: tip-
 * imaged caps, 100–200 nm multicolour beads, a 15 % wider Airy PSF than the fitted Gaussian, dim emitters, free dye,
 * part of the AFM field outside the fluorescence frame, picks jittered by 30 nm):
 * - linking after the analyst changed the detection settings releases exactly the reviewed vesicles (those of
 *   detection.json), and a detection that no longer matches what was reviewed is refused;
 * - vesicles outside a channel's frame are "not measured" there and leave that marker's denominators;
 * - a bead under a fiducial pick (100–200 nm, below the 300 nm default cut-off) never reaches the released table.
 */
import { describe, expect, afterAll } from 'vitest';
import { and, eq } from 'drizzle-orm';
import type { AppClient } from '../support/client';
import { correlativeScene, insertCorrelativeField } from '../support/correlativeField';
import type { Db } from '../../src/lib/db/client';
import { beads, fields, linkRunMarkerCounts, linkRunPhenotypes, linkRuns, releases, samples, vesicles } from '../../src/lib/db/schema';
import type { FieldDetection } from '../../src/lib/jobs/detectionTypes';
import type { DetectionSettings } from '../../src/lib/schemas/detectionSettings';
import { createStorage } from '../../src/lib/storage/client';
import { getBytes, putBytes } from '../../src/lib/storage/objects';
import { detectionKey } from '../../src/lib/storage/keys';
import { test, it } from '../support/fixtures';

const env = process.env as Record<string, string>;
const scene = correlativeScene(4242);
const AFM_NM = scene.afmPixelNm;
// as Astro escapes text in pages
const escapeHtml = (t: string) => t.replaceAll('&', '&amp;').replaceAll('<', '&lt;').replaceAll('>', '&gt;').replaceAll('"', '&quot;').replaceAll("'", '&#39;');
const sleep = (ms: number) => new Promise((r) => setTimeout(r, ms));

let db: Db;
let analyst: AppClient;
let biologist: AppClient;
let fieldId: string;
let sampleId: string;

const row = async () => (await db.select().from(fields).where(eq(fields.id, fieldId)))[0];
const detection = async (): Promise<FieldDetection> => {
  const r = await analyst.fetch(`/api/fields/${fieldId}/detection`);
  expect(r.status).toBe(200);
  return r.json();
};

/** Waits until the field's job has finished; returns its status (throws with the reason shown when it failed). */
// generous: in a run that skips the pilot's processing (HEIGHTLIGHT_SKIP_PILOT=1), the pilot's ingestion jobs still queue ahead
async function settled(timeoutMs = 600_000): Promise<string> {
  const until = Date.now() + timeoutMs;
  while (Date.now() < until) {
    const f = await row();
    if (f.status === 'failed') throw new Error(`the job failed: ${f.failureReason}`);
    if (!['ingesting', 'uploading'].includes(f.status) && (f.progress?.fraction ?? 1) >= 1) return f.status;
    await sleep(400);
  }
  throw new Error('the field was not processed in time');
}

async function link() {
  expect((await analyst.fetch(`/api/fields/${fieldId}/link`, { method: 'POST' })).status).toBe(202);
  await sleep(500);
  return settled();
}

const currentRun = async () => (await db.select().from(linkRuns).where(and(eq(linkRuns.fieldId, fieldId), eq(linkRuns.current, true))))[0];

test.beforeAll(async ({ db: fileDb, signedIn }) => {
  db = fileDb;
  [analyst, biologist] = await Promise.all([signedIn('analyst'), signedIn('biologist')]);
  // a sample of its own in the demo study (no control kind), so the demo samples stay as seeded
  const [demo] = await db.select().from(samples).where(eq(samples.code, 'HCP-001'));
  const [s] = await db.insert(samples).values({ studyId: demo.studyId, code: `VSET-${Date.now()}` }).returning();
  sampleId = s.id;
  fieldId = await insertCorrelativeField(db, s.id, 'correlative 1', scene);
  expect((await biologist.fetch(`/api/fields/${fieldId}/retry`, { method: 'POST' })).status).toBe(202);
  expect(await settled()).toBe('ready');
}, 660_000);
afterAll(async () => {
  if (sampleId) await db.delete(samples).where(eq(samples.id, sampleId));
});

describe('one vesicle set from review to release', () => {
  let reviewed: FieldDetection;

  it('links after a detection-settings change exactly the vesicles reviewed, minus the picked beads', async () => {
    const before = await detection();
    // a hand-set 8 nm threshold: the low caps (h = a·tan(θ/2) from 4.4 nm, generator ranges) drop out
    const settings: DetectionSettings = { threshold: { method: 'manual', thresholdNm: 8 }, minHeightNm: 2, minAreaNm2: 9 * AFM_NM * AFM_NM, beadMinHeightNm: 300, levellingOrder: 1 };
    const put = await analyst.json(`/api/fields/${fieldId}/detection-settings`, 'PUT', { settings, expectedVersion: (await row()).version });
    expect(put.status, await put.clone().text()).toBe(202);
    await sleep(300);
    expect(await settled()).toBe('ready');
    reviewed = await detection();
    expect(reviewed.settings?.source).toBe('analyst');
    // the settings matter: linking with the defaults would have measured another set
    expect(reviewed.vesicles.length).toBeLessThan(before.vesicles.length);

    // register on the scene's jittered fiducial picks (beads), then link through the worker
    const save = await analyst.json(`/api/fields/${fieldId}/registration`, 'POST', { basedOnVersion: 0, pairs: scene.fiducialPicks });
    expect(save.status, await save.clone().text()).toBe(201);
    expect(await link()).toBe('linked');

    const run = await currentRun();
    expect((run.settings as { detection?: unknown }).detection).toEqual(reviewed.settings);
    const rows = await db.select().from(vesicles).where(eq(vesicles.linkRunId, run.id));
    const runBeads = await db.select().from(beads).where(eq(beads.linkRunId, run.id));
    // every row is the reviewed vesicle of its index, at its reviewed position (4-byte reals: ~1e-4 px here)
    for (const r of rows) {
      const v = reviewed.vesicles[r.index];
      expect(v).toBeDefined();
      expect(Math.abs(r.xAfmPx - v.x)).toBeLessThan(1e-3);
      expect(Math.abs(r.yAfmPx - v.y)).toBeLessThan(1e-3);
    }
    // and the reviewed vesicles missing from the rows are exactly beads of the run's bead list
    const released = new Set(rows.map((r) => r.index));
    const missing = reviewed.vesicles.filter((_, i) => !released.has(i));
    for (const m of missing) expect(Math.min(...runBeads.map((b) => Math.hypot(b.xAfmPx - m.x, b.yAfmPx - m.y)))).toBeLessThan(1e-3);
    expect(rows.length + missing.length).toBe(reviewed.vesicles.length);
  }, 900_000);

  it('a bead under a fiducial pick never reaches the released table', async () => {
    const run = await currentRun();
    const rows = await db.select().from(vesicles).where(eq(vesicles.linkRunId, run.id));
    const runBeads = await db.select().from(beads).where(eq(beads.linkRunId, run.id));
    const picked = scene.pickBeadIndices.map((i) => scene.beads[i]);
    expect(picked.length).toBeGreaterThanOrEqual(3);
    // the picked beads are 100–200 nm: under the 300 nm cut-off they are detected as "vesicles" and only the pick
    // makes them beads (without the rule they would be released)
    const tallInReview = reviewed.vesicles.filter((v) => v.heightNm > 80);
    expect(tallInReview.length).toBeGreaterThan(0);
    for (const b of picked) {
      // the bead's apex lies within 2 AFM px of its true centre (tip-imaged sphere, generator truth)
      expect(Math.min(...rows.map((r) => Math.hypot(r.xAfmPx - b.afmPx.x, r.yAfmPx - b.afmPx.y)))).toBeGreaterThan(3);
      const near = runBeads.filter((x) => Math.hypot(x.xAfmPx - b.afmPx.x, x.yAfmPx - b.afmPx.y) < 3);
      expect(near).toHaveLength(1);
    }
    expect(runBeads.filter((b) => b.underFiducialPick).length).toBeGreaterThanOrEqual(picked.length);
    // no released row is taller than the tallest true vesicle + 20 % (beads are 100–200 nm, vesicles ≤ 49 nm)
    const tallestVesicle = Math.max(...scene.vesicles.map((v) => v.heightNm));
    for (const r of rows) expect(r.heightNm).toBeLessThan(1.2 * tallestVesicle + 5);

    // approve and release: the released run is this one, with these rows
    const f = await row();
    const rev = await analyst.json(`/api/fields/${fieldId}/review`, 'POST', { decision: 'approved', expectedVersion: f.version });
    expect(rev.status, await rev.clone().text()).toBe(200);
    const rel = await analyst.fetch(`/api/samples/${sampleId}/release`, { method: 'POST' });
    expect(rel.status, await rel.clone().text()).toBe(201);
    const [release] = await db.select().from(releases).where(eq(releases.sampleId, sampleId));
    expect(release.linkRunIds).toEqual([run.id]);
  }, 60_000);

  it('vesicles outside a channel\'s frame leave that marker\'s denominator', async () => {
    const run = await currentRun();
    const rows = await db.select().from(vesicles).where(eq(vesicles.linkRunId, run.id));
    const counts = await db.select().from(linkRunMarkerCounts).where(eq(linkRunMarkerCounts.linkRunId, run.id)).orderBy(linkRunMarkerCounts.channelIndex);
    expect(counts.map((c) => c.channelIndex)).toEqual([0, 1, 2]);
    // the scene puts the AFM field's centre at 0.8 of the frame side: part of the AFM field lies outside the frame
    const outside = rows.filter((r) => r.measuredBits !== 7);
    expect(outside.length).toBeGreaterThan(0);
    for (const c of counts) {
      const inFrame = rows.filter((r) => r.markers[c.channelIndex]?.call !== 'not_measured');
      expect(c.nMeasured).toBe(inFrame.length);
      expect(c.nMeasured).toBeLessThan(rows.length);
      expect(c.nPositive).toBe(inFrame.filter((r) => r.markers[c.channelIndex]?.call === 'positive').length);
      // a vesicle not measured there carries no call, no amplitude and no positive bit
      for (const r of rows.filter((x) => !(x.measuredBits & (1 << c.channelIndex)))) {
        expect(r.markers[c.channelIndex]).toMatchObject({ call: 'not_measured', amplitude: null });
        expect(r.markerBits & (1 << c.channelIndex)).toBe(0);
      }
    }
    // the true frame membership of the released vesicles agrees with the stored one (nearest true vesicle, < 2 px)
    let agree = 0;
    for (const r of rows) {
      const t = scene.vesicles.reduce((best, v) => (Math.hypot(v.afmPx.x - r.xAfmPx, v.afmPx.y - r.yAfmPx) < Math.hypot(best.afmPx.x - r.xAfmPx, best.afmPx.y - r.yAfmPx) ? v : best));
      if ((Object.values(t.inFrameByMarker).every(Boolean) ? 7 : 0) === (r.measuredBits === 7 ? 7 : 0)) agree++;
    }
    // vesicles within a PSF width of the frame edge may fall either side: allow 5 %
    expect(agree / rows.length).toBeGreaterThanOrEqual(0.95);
    // phenotypes count only vesicles measured in every channel
    const phenotypes = await db.select().from(linkRunPhenotypes).where(eq(linkRunPhenotypes.linkRunId, run.id));
    expect(phenotypes.reduce((t, p) => t + p.n, 0)).toBe(rows.length - outside.length);
  });

  it('the field page says what positive means per marker, beside chance, with beads apart; the exports carry the calls', async () => {
    const run = await currentRun();
    const rows = await db.select().from(vesicles).where(eq(vesicles.linkRunId, run.id));
    const runBeads = await db.select().from(beads).where(eq(beads.linkRunId, run.id));
    const counts = await db.select().from(linkRunMarkerCounts).where(eq(linkRunMarkerCounts.linkRunId, run.id)).orderBy(linkRunMarkerCounts.channelIndex);
    const html = await (await analyst.fetch(`/fields/${fieldId}`)).text();
    expect(html).toContain('Research use only');
    const calls = html.slice(html.indexOf('data-testid="marker-calls"'), html.indexOf('data-testid="beads"'));
    const sentences = run.settings.ruleSentence as Record<string, string>;
    for (const [i, m] of ['CD9', 'CD63', 'CD81'].entries()) {
      expect(calls).toContain(escapeHtml(sentences[m]));
      expect(calls).toContain(`${counts[i].nPositive} / ${counts[i].nMeasured}`);
    }
    expect(calls).toMatch(/By chance/);
    const beadSection = html.slice(html.indexOf('data-testid="beads"'));
    expect(beadSection.match(/under a fiducial pick/g)?.length ?? 0).toBeGreaterThanOrEqual(scene.pickBeadIndices.length);

    // beads export apart; the vesicle export has one row per released vesicle with amplitude, SE, z, q and the call
    const beadCsv = (await (await analyst.fetch(`/api/fields/${fieldId}/beads.csv`)).text()).trim().split('\n');
    expect(beadCsv[0]).toMatch(/^# Research use only/);
    expect(beadCsv.length - 3).toBe(runBeads.length);
    const ves = (await (await analyst.fetch(`/api/vesicles/export.csv?fieldId=${fieldId}`)).text()).trim().split('\n');
    const header = ves[1].split(',');
    for (const c of ['CD63_amplitude_counts', 'CD63_amplitude_se_counts', 'CD63_z', 'CD63_q', 'CD63_call', 'cap_base_diameter_nm', 'footprint_diameter_nm']) expect(header).toContain(c);
    const body = ves.slice(2).map((l) => l.split(','));
    expect(body).toHaveLength(rows.length);
    expect(body.filter((r) => r[header.indexOf('CD63_call')] === 'positive')).toHaveLength(counts[1].nPositive);
    expect(body.filter((r) => r[header.indexOf('CD63_call')] === 'not_measured')).toHaveLength(rows.length - counts[1].nMeasured);
  });

  it('refuses to link a detection that is not the one reviewed, and says what to do', async () => {
    const st = createStorage({ endpoint: env.S3_ENDPOINT, region: 'us-east-1', bucket: env.S3_BUCKET, accessKeyId: 'S3RVER', secretAccessKey: 'S3RVER', forcePathStyle: true });
    const f = await row();
    const back = await analyst.json(`/api/fields/${fieldId}/review`, 'POST', { decision: 'sent_back', comment: 'check one vesicle', expectedVersion: f.version });
    expect(back.status, await back.clone().text()).toBe(200);
    // what the analyst saw loses one vesicle (as if the detection shown were older than the field's settings)
    const original = await getBytes(st, detectionKey(fieldId));
    const shown = JSON.parse(new TextDecoder().decode(original)) as FieldDetection;
    shown.vesicles.splice(3, 1);
    await putBytes(st, detectionKey(fieldId), JSON.stringify(shown), 'application/json');
    const runBefore = await currentRun();
    expect((await analyst.fetch(`/api/fields/${fieldId}/link`, { method: 'POST' })).status).toBe(202);
    const until = Date.now() + 600_000;
    let after = await row();
    while (Date.now() < until && !after.failureReason) { await sleep(400); after = await row(); }
    expect(after.status).toBe('registered');
    expect(after.failureReason).toMatch(/not the ones shown for review .*Detect again/);
    // nothing was replaced: the earlier run (frozen by the release) is the one kept
    const runs = await db.select().from(linkRuns).where(eq(linkRuns.fieldId, fieldId));
    expect(runs.map((r) => r.id)).toEqual([runBefore.id]);
    await putBytes(st, detectionKey(fieldId), original, 'application/json');
  }, 660_000);

  it("links with the study's camera model once an analyst sets it; bad values are refused and change nothing", async () => {
    const [sample] = await db.select().from(samples).where(eq(samples.id, sampleId));
    const url = `/api/studies/${sample.studyId}/camera`;
    const before = await (await analyst.fetch(url)).json();
    for (const camera of [{ offsetCounts: -5, gainCountsPerPhoton: 1.8, readNoiseCounts: 2 }, { offsetCounts: 100, gainCountsPerPhoton: 0, readNoiseCounts: 2 }, { offsetCounts: 100, gainCountsPerPhoton: 1.8 }]) {
      const r = await analyst.json(url, 'PUT', { camera });
      expect(r.status).toBe(400);
      expect((await r.json()).message).toMatch(/^Check /);
    }
    expect((await biologist.json(url, 'PUT', { camera: null })).status).toBe(403);
    expect(await (await analyst.fetch(url)).json()).toEqual(before);
    // the scene's camera (makeCorrelativeScene defaults: offset 100 counts, gain 1.8 counts/photon, read noise 2 counts)
    const put = await analyst.json(url, 'PUT', { camera: scene.camera });
    expect(put.status, await put.clone().text()).toBe(200);
    try {
      expect(await link()).toBe('linked');
      const run = await currentRun();
      const used = (run.settings.camera as Record<string, { model: unknown; source: string }>).CD9;
      expect(used).toEqual({ model: scene.camera, source: 'given', note: expect.anything() });
    } finally {
      await analyst.json(url, 'PUT', { camera: null });
    }
  }, 660_000);
});
