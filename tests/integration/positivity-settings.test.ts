/**
 * Per-marker positivity settings (k, a threshold set by hand) through the real app, database and job worker:
 * validation and roles, the fields linked with other settings, and re-linking a demo field with them. Without
 * controls k is the calibrated z a vesicle must exceed above camera noise, so the amplitude a lone vesicle needs is
 * the null's mean + k·SD (the x_L = x̄_blank + k·s_blank form of docs/references.md §9, IUPAC Gold Book L03540); with an
 * isotype control the control's 0.99 amplitude quantile (Hyndman & Fan 1996, definition 7; docs/references.md §6) sets the specificity.
 */
import { describe, expect } from 'vitest';
import { and, desc, eq, inArray } from 'drizzle-orm';
import type { AppClient } from '../support/client';
import { DEMO } from '../support/demo';
import { ownDemoField, ownStudy } from '../support/demoField';
import { makeDemoPair } from '../../fixtures/demoScene';
import { DEMO_FIELDS } from '../../scripts/seedDemoFields';
import { applyAffine } from '../../src/lib/analysis/geometry';
import type { Db } from '../../src/lib/db/client';
import { auditLog, linkRuns, markerChannels, samples, vesicles } from '../../src/lib/db/schema';
import { test, it } from '../support/fixtures';

let analyst: AppClient;
let collaborator: AppClient;
let biologist: AppClient;
let db: Db;
let fieldId: string;
let studyId: string;
const spec = DEMO_FIELDS.find((f) => f.code === 'HCP-001')!;
const truth = makeDemoPair({ seed: spec.seed, positiveFractions: spec.positiveFractions });
type Run = typeof linkRuns.$inferSelect;

const currentRun = async (): Promise<Run | undefined> =>
  (await db.select().from(linkRuns).where(and(eq(linkRuns.fieldId, fieldId), eq(linkRuns.current, true))))[0];
const panelRows = () => db.select({ marker: markerChannels.marker, k: markerChannels.positivityK, manual: markerChannels.manualThresholdCounts })
  .from(markerChannels).where(eq(markerChannels.studyId, studyId)).orderBy(markerChannels.channelIndex);

/** Waits until the field is linked by a run other than `previousRunId`. */
async function waitForNewRun(previousRunId: string | undefined, timeoutMs = 120_000): Promise<Run> {
  const until = Date.now() + timeoutMs;
  while (Date.now() < until) {
    const f = (await (await analyst.fetch(`/api/fields/${fieldId}`)).json()).field;
    if (f.failureReason) throw new Error(f.failureReason);
    const run = await currentRun();
    if (run && run.id !== previousRunId && f.status === 'linked' && (f.progress?.fraction ?? 1) >= 1) return run;
    await new Promise((r) => setTimeout(r, 500));
  }
  throw new Error('the field was not linked again');
}

const put = (c: AppClient, markers: unknown) => c.json(`/api/studies/${studyId}/positivity`, 'PUT', { markers });
const relink = (c: AppClient, ids: string[]) => c.json(`/api/studies/${studyId}/relink`, 'POST', { fieldIds: ids });

/**
 * The 0.99 quantile of the study's isotype and secondary-only control vesicles' stored amplitudes of one marker (current
 * runs; a vesicle outside the frame has none), by Hyndman & Fan (1996) definition 7, R's default quantile():
 * h = (n − 1)·p, x⌊h⌋ + (h − ⌊h⌋)·(x⌊h⌋+1 − x⌊h⌋) on the sorted values (0-based).
 */
async function controlQuantile(channel: number) {
  const rows = await db.select({ markers: vesicles.markers }).from(vesicles)
    .innerJoin(samples, eq(samples.id, vesicles.sampleId)).innerJoin(linkRuns, and(eq(linkRuns.id, vesicles.linkRunId), eq(linkRuns.current, true)))
    .where(and(eq(samples.studyId, studyId), inArray(samples.controlKind, ['isotype', 'secondary_only'])));
  const x = rows.map((r) => (r.markers as { amplitude: number | null }[])[channel]?.amplitude).filter((v): v is number => v != null).sort((a, b) => a - b);
  const h = (x.length - 1) * 0.99;
  const lo = Math.floor(h);
  return { n: x.length, q99: x[lo] + (h - lo) * ((x[lo + 1] ?? x[lo]) - x[lo]) };
}

/** Stored joint amplitudes and calls of one marker (in-frame vesicles) of a run. */
async function callsOf(runId: string, channel: number) {
  const rows = await db.select({ markers: vesicles.markers, bits: vesicles.markerBits, outOfFrame: vesicles.outOfFrame }).from(vesicles).where(eq(vesicles.linkRunId, runId));
  const inFrame = rows.filter((r) => !r.outOfFrame);
  return {
    amplitudes: inFrame.map((r) => (r.markers as { amplitude: number | null }[])[channel].amplitude).filter((v): v is number => v != null),
    positive: rows.filter((r) => (r.bits & (1 << channel)) !== 0).length,
  };
}

test.beforeAll(async ({ db: fileDb, signedIn }) => {
  analyst = await signedIn('analyst');
  collaborator = await signedIn('collaborator');
  biologist = await signedIn('biologist');
  db = fileDb;
  // a study of its own (the demo panel and members): its thresholds change here while other files link the demo study
  studyId = await ownStudy(db, 'Positivity settings test');
  fieldId = await ownDemoField(db, spec.code, 'POS', 120_000, studyId);
  const status = (await (await analyst.fetch(`/api/fields/${fieldId}`)).json()).field.status;
  if (status === 'approved') {
    const f = (await (await analyst.fetch(`/api/fields/${fieldId}`)).json()).field;
    expect((await analyst.json(`/api/fields/${fieldId}/review`, 'POST', { decision: 'sent_back', comment: 'positivity test', expectedVersion: f.version })).status).toBe(200);
  }
  const beads = truth.truth.filter((t) => t.kind === 'bead');
  const pairs = beads.map((b) => ({ afm: { x: b.xPx, y: b.yPx }, fl: applyAffine(truth.flFromAfm, { x: b.xPx, y: b.yPx }) }));
  const versions = (await (await analyst.fetch(`/api/fields/${fieldId}/registration`)).json()).versions;
  expect((await analyst.json(`/api/fields/${fieldId}/registration`, 'POST', { basedOnVersion: versions[0]?.version ?? 0, pairs })).status).toBe(201);
  const before = await currentRun();
  expect((await analyst.fetch(`/api/fields/${fieldId}/link`, { method: 'POST' })).status).toBe(202);
  await waitForNewRun(before?.id);
}, 240_000);

describe('positivity settings per marker', () => {
  it('refuses bad input with 400 and changes nothing; collaborators and biologists get 403', async () => {
    const before = await panelRows();
    for (const [markers, pattern] of [
      [[{ marker: 'CD63', positivityK: 0, manualThresholdCounts: null }], /k must be at least 0\.5/],
      [[{ marker: 'CD63', positivityK: 10.5, manualThresholdCounts: null }], /k must be at most 10/],
      [[{ marker: 'CD63', positivityK: 3.255, manualThresholdCounts: null }], /steps of 0\.01/],
      [[{ marker: 'CD9', positivityK: 3, manualThresholdCounts: -1 }], /above 0 counts/],
      [[{ marker: 'CD47', positivityK: 3, manualThresholdCounts: null }], /"CD47" is not in this study's panel \(CD9, CD63, CD81\)/],
      [[{ marker: 'CD9', positivityK: 4, manualThresholdCounts: null }, { marker: 'CD9', positivityK: 5, manualThresholdCounts: null }], /Each marker may appear once/],
      [[], /at least one marker/],
    ] as const) {
      const res = await put(analyst, markers);
      expect(res.status).toBe(400);
      expect((await res.json()).message).toMatch(pattern);
    }
    // a valid change from a role that may not make it
    for (const c of [collaborator, biologist]) {
      const res = await put(c, [{ marker: 'CD63', positivityK: 5, manualThresholdCounts: null }]);
      expect(res.status).toBe(403);
      expect((await relink(c, [fieldId])).status).toBe(403);
    }
    expect((await collaborator.fetch(`/api/studies/${studyId}/positivity`)).status).toBe(403);
    expect(await panelRows()).toEqual(before);
  });

  it('k = 5 gives a higher derived threshold than the default k = 2.58 (one-sided p < 0.005), listed as linked with other settings until linked again', async () => {
    const run3 = (await currentRun())!;
    expect(run3.settings.k).toMatchObject({ CD63: 2.58 });
    const t3 = (run3.settings.thresholds as Record<string, number>).CD63;
    const set = await put(analyst, [{ marker: 'CD63', positivityK: 5, manualThresholdCounts: null }]);
    expect(set.status).toBe(200);
    const body = await set.json();
    expect(body.markers.find((m: { marker: string }) => m.marker === 'CD63')).toMatchObject({ positivityK: 5, manualThresholdCounts: null });
    const listed = body.fieldsLinkedWithOtherSettings.find((f: { id: string }) => f.id === fieldId);
    expect(listed.markers.map((m: { marker: string }) => m.marker)).toEqual(['CD63']);
    expect(listed.markers[0].used).toMatchObject({ k: 2.58, thresholdCounts: t3 });
    const [entry] = await db.select().from(auditLog).where(and(eq(auditLog.action, 'panel.changed'), eq(auditLog.targetId, studyId))).orderBy(desc(auditLog.id)).limit(1);
    expect(entry.actorEmail).toBe(DEMO.analyst);
    expect(entry.details).toMatchObject({ positivity: [{ marker: 'CD63', from: { k: 2.58, manualThresholdCounts: null }, to: { k: 5, manualThresholdCounts: null } }] });

    const queued = await relink(analyst, [fieldId]);
    expect(queued.status).toBe(202);
    expect((await queued.json()).queued).toEqual([fieldId]);
    const run5 = await waitForNewRun(run3.id);
    const t5 = (run5.settings.thresholds as Record<string, number>).CD63;
    expect(run5.settings.k).toMatchObject({ CD9: 2.58, CD63: 5, CD81: 2.58 });
    expect(t5).toBeGreaterThan(t3);
    const rule = (run5.settings.thresholdRule as Record<string, string>).CD63;
    expect(rule).toBe((run3.settings.thresholdRule as Record<string, string>).CD63);
    if (rule === 'camera_noise') {
      // k is the calibrated z a vesicle must exceed; on the same empty places of the same frame the amplitude a lone
      // vesicle needs is the null's mean + k·SD, so the thresholds differ by (5 − 2.58)·SD
      const ch = (run5.summary as { channels: Record<string, { backgroundMeanCounts: number; backgroundSdCounts: number }> }).channels.CD63;
      expect(t5).toBeCloseTo(ch.backgroundMeanCounts + 5 * ch.backgroundSdCounts, 6);
      expect(t5 - t3).toBeCloseTo((5 - 2.58) * ch.backgroundSdCounts, 6);
    } else {
      // control samples linked in this study: their 0.99 amplitude quantile, or the noise threshold where higher
      expect(rule).toBe('control');
      const { q99 } = await controlQuantile(1);
      expect((run5.settings.controlThresholds as Record<string, number>).CD63).toBeCloseTo(q99, 3);
      expect(t5).toBeGreaterThanOrEqual(q99);
    }
    // the run says in one sentence what positive meant, with k in it
    const sentence = (run5.settings.ruleSentence as Record<string, string>).CD63;
    expect(sentence).toMatch(rule === 'camera_noise' ? /above camera noise.*calibrated z > 5\.00/ : /control/);
    const after = await (await analyst.fetch(`/api/studies/${studyId}/positivity`)).json();
    expect(after.fieldsLinkedWithOtherSettings.map((f: { id: string }) => f.id)).not.toContain(fieldId);
  });

  it('a threshold set by hand for CD9 replaces the derived one: positives are exactly the stored amplitudes above it', async () => {
    const runBefore = (await currentRun())!;
    const cd9Before = await callsOf(runBefore.id, 0);
    const cd81Before = await callsOf(runBefore.id, 2);
    // about the median stored CD9 amplitude; a whole count + 0.5 is exact in the 4-byte column
    const sorted = [...cd9Before.amplitudes].sort((a, b) => a - b);
    const manual = Math.round(sorted[Math.floor(sorted.length / 2)]) + 0.5;
    expect((await put(analyst, [{ marker: 'CD9', positivityK: 3, manualThresholdCounts: manual }])).status).toBe(200);
    expect((await relink(analyst, [fieldId])).status).toBe(202);
    const run = await waitForNewRun(runBefore.id);
    expect(run.settings.thresholdRule).toMatchObject({ CD9: 'manual' });
    expect(run.settings.thresholds).toMatchObject({ CD9: manual });
    expect(run.settings.k).toMatchObject({ CD9: null, CD63: 5 });
    expect((run.settings.ruleSentence as Record<string, string>).CD9).toMatch(/threshold set by hand/);

    const cd9 = await callsOf(run.id, 0);
    expect(cd9.amplitudes.length).toBeGreaterThan(20);
    expect(cd9.positive).toBe(cd9.amplitudes.filter((a) => a > manual).length);
    expect(cd9.positive).not.toBe(cd9Before.positive);
    expect((run.summary as { positiveByMarker: Record<string, number> }).positiveByMarker.CD9).toBe(cd9.positive);
    // the joint fit does not depend on thresholds: CD81 keeps its calls
    expect((await callsOf(run.id, 2)).positive).toBe(cd81Before.positive);
  });

  it('an approved field is listed but not linked again: it must be sent back first', async () => {
    const f = (await (await analyst.fetch(`/api/fields/${fieldId}`)).json()).field;
    expect((await analyst.json(`/api/fields/${fieldId}/review`, 'POST', { decision: 'approved', comment: '', expectedVersion: f.version })).status).toBe(200);
    const set = await (await put(analyst, [{ marker: 'CD63', positivityK: 4.5, manualThresholdCounts: null }])).json();
    expect(set.fieldsLinkedWithOtherSettings.find((x: { id: string }) => x.id === fieldId)).toMatchObject({ status: 'approved' });
    const res = await relink(analyst, [fieldId]);
    expect(res.status).toBe(409);
    expect((await res.json()).message).toMatch(/approved: send it back before linking again/);
    const g = (await (await analyst.fetch(`/api/fields/${fieldId}`)).json()).field;
    expect((await analyst.json(`/api/fields/${fieldId}/review`, 'POST', { decision: 'sent_back', comment: 'positivity settings changed', expectedVersion: g.version })).status).toBe(200);
  });

  it("with an isotype control linked, the 0.99 quantile of its vesicles' amplitudes is the specificity threshold; a hand-set threshold still wins", async () => {
    const iso = DEMO_FIELDS.find((f) => f.code === 'HCP-ISO')!;
    const isoTruth = makeDemoPair({ seed: iso.seed, positiveFractions: iso.positiveFractions });
    const isoId = await ownDemoField(db, iso.code, 'POS-ISO', 120_000, studyId);
    const isoField = (await (await analyst.fetch(`/api/fields/${isoId}`)).json()).field;
    if (!['linked', 'approved'].includes(isoField.status)) {
      const pairs = isoTruth.truth.filter((t) => t.kind === 'bead').map((b) => ({ afm: { x: b.xPx, y: b.yPx }, fl: applyAffine(isoTruth.flFromAfm, { x: b.xPx, y: b.yPx }) }));
      const versions = (await (await analyst.fetch(`/api/fields/${isoId}/registration`)).json()).versions;
      if (!versions.length) expect((await analyst.json(`/api/fields/${isoId}/registration`, 'POST', { basedOnVersion: 0, pairs })).status).toBe(201);
      expect((await analyst.fetch(`/api/fields/${isoId}/link`, { method: 'POST' })).status).toBe(202);
      const until = Date.now() + 120_000;
      while ((await (await analyst.fetch(`/api/fields/${isoId}`)).json()).field.status !== 'linked') {
        if (Date.now() > until) throw new Error('the control field was not linked');
        await new Promise((r) => setTimeout(r, 500));
      }
    }
    // HCP-001 was sent back: the field's own link route links it again (CD63 k = 4.5, CD9 set by hand)
    const before = (await currentRun())!;
    expect((await analyst.fetch(`/api/fields/${fieldId}/link`, { method: 'POST' })).status).toBe(202);
    const run = await waitForNewRun(before.id);
    const { n, q99 } = await controlQuantile(1);
    expect(n).toBeGreaterThanOrEqual(100);
    expect(run.settings.thresholdRule).toMatchObject({ CD9: 'manual', CD63: 'control', CD81: 'control' });
    expect(run.settings.k).toMatchObject({ CD9: null, CD63: 4.5, CD81: 2.58 });
    // the isotype control's own threshold is the 0.99 quantile of its vesicles' stored CD63 amplitudes (k plays no
    // part there; it is the z a vesicle must also reach above camera noise), so the amplitude needed is the larger of the two
    const fromControls = (run.settings.controlThresholds as Record<string, number>).CD63;
    expect(fromControls).toBeCloseTo(q99, 3);
    expect((run.settings.thresholds as Record<string, number>).CD63).toBeGreaterThanOrEqual(fromControls);
    expect(run.settings.nbThresholdValues).toMatchObject({ CD63: n });
    expect((run.settings.ruleSentence as Record<string, string>).CD63).toContain(`from ${n} control vesicles`);
  });
});
