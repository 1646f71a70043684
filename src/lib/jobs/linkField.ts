/**
 * The linking job: each vesicle of the field, mapped through its latest registration's saved
 * transform (its own model, never refitted), gets an aperture intensity and SNR (reported), a joint
 * amplitude and a positive/negative call of that joint amplitude per marker, and a phenotype. Results
 * are saved with the settings and transform version that produced them. Idempotent: a re-run
 * replaces the field's current results in one transaction (runs frozen by a release are kept).
 */
import { asc, desc, eq, inArray, sql } from 'drizzle-orm';
import type { Db } from '../db/client';
import { fields, fieldFiles, samples, studies, markerChannels, registrations, linkRuns, vesicles, releases, beads, type VesicleMarkerJson } from '../db/schema';
import type { Storage } from '../storage/client';
import { decodeStoredFile } from './decodeStoredFile';
import { analyzeField, fieldStages, DEFAULT_EMISSION_NM, DEFAULT_NUMERICAL_APERTURE, type AnalyzeFieldResult, type BeadReason, type FieldStage, type VesicleRecord } from '../analysis/pipeline';
import type { Affine } from '../analysis/types';
import { summariseLinkRun } from '../db/queries/linkRunSummaries';
import { setFieldProgress } from './progress';
import { controlThresholds } from './controlThresholds';
import { PermanentJobError, type IngestDeps } from './ingestField';
import { DEFAULT_POSITIVITY_K, roundK } from './positivitySettings';
import { fieldHeightMap, reviewedDetectionMismatch } from './fieldHeightMap';
import type { FieldDetection } from './detectionTypes';
import { getBytes } from '../storage/objects';
import { detectionKey } from '../storage/keys';

const BATCH = 1000;
const fin = (v: number | null | undefined) => (v != null && Number.isFinite(v) ? v : null);

type MarkerRule = 'camera_noise' | 'control' | 'manual';
/** What linking reads of a control threshold (controlThresholds.ts); `kind` where it says which control set it. */
type ControlThreshold = { thresholdCounts: number; nbControls: number; kind?: 'isotype' | 'secondary_only' };

/** detection.json as ingestion stored it for review. */
async function readDetection(st: Storage, fieldId: string): Promise<FieldDetection> {
  let bytes: Uint8Array;
  try {
    bytes = await getBytes(st, detectionKey(fieldId));
  } catch {
    throw new PermanentJobError('The detection shown for review is missing: press "Detect again" on the field page, check the vesicles, then link.');
  }
  return JSON.parse(new TextDecoder().decode(bytes)) as FieldDetection;
}

export async function linkField(deps: IngestDeps, fieldId: string) {
  const { db, st } = deps;
  const [field] = await db.select().from(fields).where(eq(fields.id, fieldId));
  if (!field) return;
  const [sample] = await db.select().from(samples).where(eq(samples.id, field.sampleId));
  const panel = await db.select().from(markerChannels).where(eq(markerChannels.studyId, sample.studyId)).orderBy(asc(markerChannels.channelIndex));
  const [reg] = await db.select().from(registrations).where(eq(registrations.fieldId, fieldId)).orderBy(desc(registrations.version)).limit(1);
  const progress = (stage: string, f: number) => setFieldProgress(db, fieldId, stage, f);
  try {
    if (!reg) throw new PermanentJobError('The field has no saved registration: register it before linking.');
    const files = await db.select().from(fieldFiles).where(eq(fieldFiles.fieldId, fieldId)).orderBy(asc(fieldFiles.channelIndex));
    await progress('reading files', 0.02);
    const decode = (key: string) => decodeStoredFile(st, key, deps.decodeLimits);
    const topo = await decode(files.find((f) => f.kind === 'topography')!.objectKey);
    const frames = [];
    for (const f of files.filter((x) => x.kind === 'fluorescence')) frames.push(...(await decode(f.objectKey)).pages);
    const markers = frames.map((_, c) => panel[c]?.marker ?? `ch${c + 1}`);

    // One vesicle set: the detection the analyst reviewed (detection.json, written by ingestion with the field's
    // settings) is made again by the same call and must match it record for record; that detection is then linked.
    const reviewed = await readDetection(st, fieldId);
    const { afm, settingsUsed } = fieldHeightMap(field, topo.pages[0]);
    const mismatch = reviewedDetectionMismatch(reviewed, afm, settingsUsed);
    if (mismatch) {
      throw new PermanentJobError(`The vesicles to link are not the ones shown for review (${mismatch}). Press "Detect again" on the field page, check the vesicles, then link.`);
    }

    // per marker: a threshold set by hand wins; else the study's control samples (per control kind); else camera noise
    const setting = (m: string) => panel.find((p) => p.marker === m);
    const kOf = (m: string) => roundK(setting(m)?.positivityK ?? DEFAULT_POSITIVITY_K);
    const manual = Object.fromEntries(markers.flatMap((m) => (setting(m)?.manualThresholdCounts != null ? [[m, setting(m)!.manualThresholdCounts!]] : [])));
    const positivityKByMarker = Object.fromEntries(markers.map((m) => [m, kOf(m)]));
    // all markers go in, in channel order (the stored calls are indexed by channel); hand-set ones are dropped after
    const fromControls: Record<string, ControlThreshold> = sample.controlKind === 'none' && markers.some((m) => manual[m] === undefined)
      ? await controlThresholds(db, sample.studyId, markers, positivityKByMarker) as Record<string, ControlThreshold> : {};
    const controlThresholdByMarker = Object.fromEntries(Object.entries(fromControls).filter(([m]) => manual[m] === undefined)
      .map(([m, t]) => [m, { kind: t.kind ?? 'isotype', thresholdCounts: t.thresholdCounts, nbControls: t.nbControls }]));
    const [study] = await db.select({ offset: studies.cameraOffsetCounts, gain: studies.cameraGainCountsPerPhoton, read: studies.cameraReadNoiseCounts })
      .from(studies).where(eq(studies.id, sample.studyId));
    // the study's camera model: values left unset are estimated from each frame by the analysis
    const camera = {
      ...(study?.offset != null ? { offsetCounts: study.offset } : {}),
      ...(study?.gain != null ? { gainCountsPerPhoton: study.gain } : {}),
      ...(study?.read != null ? { readNoiseCounts: study.read } : {}),
    };

    // analyzeField is synchronous: its stage reports are written in order once it returns
    // (the bar moves reading → analysing → saving), never after the final state.
    const stages: [FieldStage, number][] = [];
    await progress('linking: analysing', 0.1);
    const result = analyzeField(
      {
        heightNm: topo.pages[0], afmPixelNm: field.afmPixelNm!, flPixelNm: field.flPixelNm!, numericalAperture: field.objectiveNa ?? DEFAULT_NUMERICAL_APERTURE,
        // the same emission fallback as ingestion, so linking uses the PSF of the spots shown at registration
        channels: frames.map((raster, c) => ({ marker: markers[c], raster, emissionNm: field.channelEmissionNm[c] ?? panel[c]?.emissionNm ?? DEFAULT_EMISSION_NM })),
        // the accepted transform as saved (affine or similarity), not a refit of its pairs
        savedRegistration: { flFromAfm: reg.flFromAfm as unknown as Affine, model: reg.model, pairs: reg.pairs },
        reviewedDetection: afm,
        thresholdCountsByMarker: manual,
        controlThresholdByMarker,
        camera,
      },
      {
        tipRadiusNm: field.tipRadiusNm ?? 0,
        positivityKByMarker,
        onProgress: (stage, f) => stages.push([stage, f]),
      },
    );

    for (const [stage, f] of stages.filter(([, f]) => f === 1)) await progress(`linking: ${stage} done`, 0.1 + 0.75 * ((fieldStages.indexOf(stage) + f) / fieldStages.length));
    await progress('saving results', 0.9);
    const ch = (m: string) => result.summary.channels[m];
    const ruleOf = (m: string): MarkerRule => (manual[m] !== undefined ? 'manual' : (ch(m)?.rule ?? (controlThresholdByMarker[m] ? 'control' : 'camera_noise')));
    // per marker: the rule, what "positive" means under it (one sentence), z_crit or the threshold, and the camera model
    const settings = {
      registrationVersion: reg.version,
      registrationModel: reg.model,
      detection: settingsUsed,
      positivityMeasure: 'joint_amplitude',
      thresholdUnit: ch(markers[0])?.thresholdUnit ?? 'counts',
      thresholdRule: Object.fromEntries(markers.map((m) => [m, ruleOf(m)])),
      ruleSentence: Object.fromEntries(markers.map((m) => [m, ch(m)?.ruleSentence ?? null])),
      thresholdMethod: markers.map((m) => `${m}: ${ch(m)?.ruleSentence ?? ruleOf(m)}`).join('; '),
      // the amplitude a lone vesicle needs under the rule (for the control rule the larger of the control's and the noise's)
      thresholds: Object.fromEntries(markers.map((m) => [m, ch(m)?.thresholdCounts ?? null])),
      // the control samples' own threshold where the control rule applied (counts)
      controlThresholds: Object.fromEntries(markers.map((m) => [m, ruleOf(m) === 'control' ? (controlThresholdByMarker[m]?.thresholdCounts ?? null) : null])),
      k: Object.fromEntries(markers.map((m) => [m, ruleOf(m) === 'manual' ? null : kOf(m)])),
      zCritical: Object.fromEntries(markers.map((m) => [m, ch(m)?.zCritical ?? null])),
      controlKind: Object.fromEntries(markers.map((m) => [m, ch(m)?.controlKind ?? null])),
      nbThresholdValues: Object.fromEntries(markers.map((m) => [m, ruleOf(m) === 'manual' ? null
        : ruleOf(m) === 'control' ? (controlThresholdByMarker[m]?.nbControls ?? null) : (ch(m)?.nbBackgroundApertures ?? null)])),
      camera: Object.fromEntries(markers.map((m) => [m, { model: ch(m)?.camera ?? null, source: ch(m)?.cameraSource ?? null, note: ch(m)?.cameraNote ?? null }])),
      chancePositiveFraction: Object.fromEntries(markers.map((m) => [m, ch(m)?.chancePositiveFraction ?? null])),
      markers,
    };
    // any object under a fiducial pick is a bead, whatever its height: it leaves the vesicles for the bead list
    const picked = underPicks(result, topo.pages[0].width, reg.pairs);
    const released = result.records.filter((r) => !picked.has(r));
    // each released vesicle keeps the number it had at review (the pipeline renumbers after taking the beads out)
    const reviewedIndex = new Map(reviewed.vesicles.map((v, i) => [`${v.x},${v.y}`, i]));
    const indexOf = (r: VesicleRecord) => reviewedIndex.get(`${r.xAfmPx},${r.yAfmPx}`) ?? r.index;
    const beadRows = [...fieldBeads(result, markers), ...[...picked].map((r) => ({
      xAfmPx: r.xAfmPx, yAfmPx: r.yAfmPx, xFlPx: fin(r.xFlPx), yFlPx: fin(r.yFlPx), heightNm: r.heightNm, footprintDiameterNm: r.footprintDiameterNm,
      reason: 'under a fiducial pick', underFiducialPick: true,
      markers: markers.map((m) => ({ amplitude: fin(r.markers[m]?.amplitudeCounts), se: fin(r.markers[m]?.amplitudeSeCounts), z: fin(r.markers[m]?.z) })) as unknown[],
    }))].map((b, index) => ({ ...b, index }));
    await db.transaction(async (tx) => {
      // one writer per field at a time: a job retried while its first run still finishes waits here
      await tx.execute(sql`select id from fields where id = ${fieldId} for update`);
      // only this sample's releases can hold this field's runs
      const frozen = new Set((await tx.select({ ids: releases.linkRunIds }).from(releases).where(eq(releases.sampleId, sample.id))).flatMap((r) => r.ids));
      const old = await tx.select({ id: linkRuns.id }).from(linkRuns).where(eq(linkRuns.fieldId, fieldId));
      const deletable = old.map((o) => o.id).filter((id) => !frozen.has(id));
      if (deletable.length) await tx.delete(linkRuns).where(inArray(linkRuns.id, deletable));
      // what is left of older runs is frozen by releases: kept, but no longer current
      await tx.update(linkRuns).set({ current: false }).where(eq(linkRuns.fieldId, fieldId));
      const [run] = await tx.insert(linkRuns).values({
        fieldId, registrationId: reg.id, settings, summary: result.summary as unknown as Record<string, unknown>, current: true,
        channelRegistration: channelRegistrationOf(result, markers),
      }).returning();
      const rows = released.map((r) => {
        let bits = 0;
        let measured = 0;
        // JSON has no NaN: a vesicle outside a frame has null values there and the call 'not_measured'
        const calls: VesicleMarkerJson[] = markers.map((m, i) => {
          const c = r.markers[m];
          if (c?.positive) bits |= 1 << i;
          // positive null: outside that channel's frame, no call (leaves that marker's denominator)
          if (c && c.positive != null) measured |= 1 << i;
          return {
            intensity: fin(c?.intensityCounts), snr: fin(c?.intensitySnr), amplitude: fin(c?.amplitudeCounts),
            // counts, may be < 0: feeds later control-sample thresholds
            amplitudeUnconstrained: fin(c?.unconstrainedAmplitudeCounts), spotDistancePx: fin(c?.spotDistancePx),
            se: fin(c?.amplitudeSeCounts), z: fin(c?.z ?? c?.amplitudeSnr), zCalibrated: fin(c?.zCalibrated), p: fin(c?.pValue), q: fin(c?.qValue),
            call: c?.positive == null ? 'not_measured' : c.positive ? 'positive' : 'negative',
          };
        });
        return {
          linkRunId: run.id, fieldId, sampleId: sample.id, index: indexOf(r), xAfmPx: r.xAfmPx, yAfmPx: r.yAfmPx, xFlPx: r.xFlPx, yFlPx: r.yFlPx,
          heightNm: r.heightNm, meanHeightNm: r.meanHeightNm, areaNm2: r.areaNm2, diameterNm: r.footprintDiameterNm, volumeNm3: r.volumeNm3, circularity: r.circularity,
          capRadiusNm: fin(r.cap?.baseRadiusNm), capBaseDiameterNm: r.cap ? fin(2 * r.cap.baseRadiusNm) : null, capHeightNm: fin(r.cap?.heightNm),
          contactAngleDeg: fin(r.cap?.contactAngleDeg), capVolumeNm3: fin(r.cap?.volumeNm3), sphereDiameterNm: fin(r.cap?.volumeEquivalentDiameterNm),
          capFlag: r.capFlag ?? null, split: r.split ?? false,
          outOfFrame: r.outOfFrame, markerBits: bits, measuredBits: measured, phenotype: r.phenotype, markers: calls,
        };
      });
      if (beadRows.length) await tx.insert(beads).values(beadRows.map((b) => ({ ...b, linkRunId: run.id })));
      for (let i = 0; i < rows.length; i += BATCH) await tx.insert(vesicles).values(rows.slice(i, i + BATCH));
      await summariseLinkRun(tx, run.id, markers.length);
      await tx.update(fields).set({ status: 'linked', failureReason: null, progress: { stage: 'done', fraction: 1 }, version: sql`${fields.version} + 1`, updatedAt: sql`now()` }).where(eq(fields.id, fieldId));
    });
    return { vesicles: released.length, beads: beadRows.length };
  } catch (e) {
    // failing the link keeps the registration: the field stays "registered" with the reason shown
    const reason = e instanceof PermanentJobError ? e.message : `Linking failed: ${(e as Error).message}`;
    await db.update(fields).set({ status: 'registered', failureReason: reason, progress: null, version: sql`${fields.version} + 1` }).where(eq(fields.id, fieldId));
    throw e;
  }
}



/** Words for why an object is a bead (BeadRecord.reasons), for the field page and the bead export. */
const BEAD_REASON_WORDS: Record<BeadReason, string> = {
  height: 'taller than any vesicle of the field',
  multicolour: 'bright in every channel',
  fiducial_pick: 'under a fiducial pick',
};

/** The pipeline's beads as bead rows (without the run id): never vesicles. */
function fieldBeads(result: AnalyzeFieldResult, markers: readonly string[]) {
  return result.beads.map((b) => ({
    xAfmPx: b.xAfmPx, yAfmPx: b.yAfmPx,
    // the first channel's position (each channel has its own transform; all are in `markers`)
    xFlPx: fin(b.flPxByMarker[markers[0]]?.x), yFlPx: fin(b.flPxByMarker[markers[0]]?.y),
    heightNm: b.heightNm, footprintDiameterNm: b.footprintDiameterNm,
    reason: b.reasons.map((r) => BEAD_REASON_WORDS[r]).join('; '),
    underFiducialPick: b.reasons.includes('fiducial_pick') || b.pickIndex != null,
    markers: markers.map((m) => ({ integratedCounts: fin(b.integratedCountsByMarker[m]), xFlPx: fin(b.flPxByMarker[m]?.x), yFlPx: fin(b.flPxByMarker[m]?.y) })) as unknown[],
  }));
}

/** Per channel (panel order): offset from the shared transform and PSF width measured on the beads. */
function channelRegistrationOf(result: AnalyzeFieldResult, markers: readonly string[]): unknown[] | null {
  const channels = result.summary.registration?.channels;
  if (!channels) return null;
  return markers.map((m) => {
    const c = channels[m];
    return c ? { marker: m, offsetFlPx: c.offsetFlPx, flFromAfm: c.flFromAfm, psfSigmaPx: fin(c.psfSigmaPx), nbBeads: c.nbBeads, source: c.source, offsetScatterNm: fin(c.offsetScatterNm) } : { marker: m };
  });
}

/** AFM px within which a pick names the object whose centroid is nearest when it falls between regions. */
const PICK_SNAP_PX = 2;

/**
 * Vesicle records that sit under a registration pick: the region under the pick's AFM pixel, or else the vesicle
 * whose centroid is within PICK_SNAP_PX of it. Fiducials are beads by the analyst's own choice.
 */
function underPicks(result: AnalyzeFieldResult, width: number, pairs: readonly { afm: { x: number; y: number } }[]): Set<VesicleRecord> {
  const out = new Set<VesicleRecord>();
  const labelAt = (x: number, y: number) => {
    const [ix, iy] = [Math.round(x), Math.round(y)];
    return width > 0 && ix >= 0 && iy >= 0 && ix < width && iy * width + ix < result.labels.length ? result.labels[iy * width + ix] : 0;
  };
  for (const p of pairs) {
    const label = labelAt(p.afm.x, p.afm.y);
    let hit = label > 0 ? result.vesicles.findIndex((v) => v.label === label) : -1;
    if (hit < 0) {
      let best = PICK_SNAP_PX;
      result.vesicles.forEach((v, i) => {
        const d = Math.hypot(v.centroidPx.x - p.afm.x, v.centroidPx.y - p.afm.y);
        if (d <= best) [best, hit] = [d, i];
      });
    }
    if (hit < 0) continue;
    const c = result.vesicles[hit].centroidPx;
    const record = result.records.find((r) => r.xAfmPx === c.x && r.yAfmPx === c.y);
    if (record) out.add(record);
  }
  return out;
}
