/**
 * The linking job: each vesicle of the field, mapped through its latest registration's saved
 * transform (its own model, never refitted), gets an aperture intensity and SNR (reported), a joint
 * amplitude and a positive/negative call of that joint amplitude per marker, and a phenotype. Results
 * are saved with the settings and transform version that produced them. Idempotent: a re-run
 * replaces the field's current results in one transaction (runs frozen by a release are kept).
 */
import { asc, desc, eq, inArray, sql } from 'drizzle-orm';
import type { Db } from '../db/client';
import { fields, fieldFiles, samples, markerChannels, registrations, linkRuns, vesicles, releases } from '../db/schema';
import type { Storage } from '../storage/client';
import { decodeStoredFile } from './decodeStoredFile';
import { analyzeField, fieldStages, DEFAULT_EMISSION_NM, DEFAULT_NUMERICAL_APERTURE, type FieldStage } from '../analysis/pipeline';
import type { Affine } from '../analysis/types';
import { summariseLinkRun } from '../db/queries/linkRunSummaries';
import { setFieldProgress } from './progress';
import { controlThresholds } from './controlThresholds';
import { PermanentJobError, type IngestDeps } from './ingestField';
import { DEFAULT_POSITIVITY_K, roundK, type MarkerPositivityUsed } from './positivitySettings';

const BATCH = 1000;
const fin = (v: number) => (Number.isFinite(v) ? v : null);

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
    // the panel's settings per marker: a hand-set threshold wins; else mean + k SD of controls, else of empty places
    const setting = (m: string) => panel.find((p) => p.marker === m);
    const kOf = (m: string) => roundK(setting(m)?.positivityK ?? DEFAULT_POSITIVITY_K);
    const manual = Object.fromEntries(markers.flatMap((m) => (setting(m)?.manualThresholdCounts != null ? [[m, setting(m)!.manualThresholdCounts!]] : [])));
    const positivityKByMarker = Object.fromEntries(markers.map((m) => [m, kOf(m)]));
    // all markers go in, in channel order (the stored calls are indexed by channel); hand-set ones are dropped after
    const fromControls = sample.controlKind === 'none' && markers.some((m) => manual[m] === undefined)
      ? await controlThresholds(db, sample.studyId, markers, positivityKByMarker) : {};
    const controls = Object.fromEntries(Object.entries(fromControls).filter(([m]) => manual[m] === undefined));
    const thresholdCountsByMarker: Record<string, number> = { ...Object.fromEntries(Object.entries(controls).map(([m, t]) => [m, t.thresholdCounts])), ...manual };

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
        thresholdCountsByMarker,
      },
      {
        tipRadiusNm: field.tipRadiusNm ?? 0,
        positivityKByMarker,
        onProgress: (stage, f) => stages.push([stage, f]),
      },
    );

    for (const [stage, f] of stages.filter(([, f]) => f === 1)) await progress(`linking: ${stage} done`, 0.1 + 0.75 * ((fieldStages.indexOf(stage) + f) / fieldStages.length));
    await progress('saving results', 0.9);
    const used = Object.fromEntries(markers.map((m): [string, MarkerPositivityUsed] => [m, {
      rule: manual[m] !== undefined ? 'manual' : controls[m] ? 'control_mean_k_sd' : 'background_mean_k_sd',
      k: manual[m] !== undefined ? null : kOf(m),
      thresholdCounts: result.summary.channels[m]?.thresholdCounts ?? null,
    }]));
    const thresholdSource = (m: string) => used[m].rule === 'manual'
      ? 'a threshold set by hand'
      : used[m].rule === 'control_mean_k_sd'
        ? `mean + ${used[m].k} SD of the joint amplitudes of ${controls[m].nbControls} control-sample vesicles`
        : `mean + ${used[m].k} SD of joint amplitudes fitted at ${result.summary.channels[m]?.nbBackgroundApertures ?? '?'} empty places of the frame`;
    // per marker: the rule, its k (null when set by hand) and the threshold compared (counts)
    const settings = {
      registrationVersion: reg.version,
      registrationModel: reg.model,
      positivityMeasure: 'joint_amplitude',
      thresholdUnit: result.summary.channels[markers[0]]?.thresholdUnit ?? 'counts',
      thresholdRule: Object.fromEntries(markers.map((m) => [m, used[m].rule])),
      thresholdMethod: markers.map((m) => `${m}: joint NNLS amplitude (counts of PSF amplitude) above ${thresholdSource(m)}`).join('; '),
      thresholds: Object.fromEntries(markers.map((m) => [m, used[m].thresholdCounts])),
      k: Object.fromEntries(markers.map((m) => [m, used[m].k])),
      nbThresholdValues: Object.fromEntries(markers.map((m) => [m, used[m].rule === 'manual' ? null
        : used[m].rule === 'control_mean_k_sd' ? controls[m].nbControls : (result.summary.channels[m]?.nbBackgroundApertures ?? null)])),
      markers,
    };
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
      const [run] = await tx.insert(linkRuns).values({ fieldId, registrationId: reg.id, settings, summary: result.summary as unknown as Record<string, unknown>, current: true }).returning();
      const rows = result.records.map((r) => {
        let bits = 0;
        let measured = 0;
        const calls = markers.map((m, i) => {
          const c = r.markers[m];
          if (c?.positive) bits |= 1 << i;
          // positive null: outside that channel's frame, no call (leaves that marker's denominator)
          if (c && c.positive !== null) measured |= 1 << i;
          return {
            intensity: c?.intensityCounts ?? NaN, snr: c?.intensitySnr ?? NaN, amplitude: c?.amplitudeCounts ?? NaN,
            amplitudeUnconstrained: c?.unconstrainedAmplitudeCounts ?? NaN, spotDistancePx: c?.spotDistancePx ?? null,
          };
        });
        return {
          linkRunId: run.id, fieldId, sampleId: sample.id, index: r.index, xAfmPx: r.xAfmPx, yAfmPx: r.yAfmPx, xFlPx: r.xFlPx, yFlPx: r.yFlPx,
          heightNm: r.heightNm, meanHeightNm: r.meanHeightNm, areaNm2: r.areaNm2, diameterNm: r.footprintDiameterNm, volumeNm3: r.volumeNm3, circularity: r.circularity,
          capRadiusNm: r.cap?.baseRadiusNm ?? null, contactAngleDeg: r.cap?.contactAngleDeg ?? null, sphereDiameterNm: r.cap?.volumeEquivalentDiameterNm ?? null,
          outOfFrame: r.outOfFrame, markerBits: bits, measuredBits: measured, phenotype: r.phenotype,
          // JSON has no NaN: a vesicle outside a frame has null values there
          // amplitudeUnconstrained (counts, may be < 0) feeds later control-sample thresholds
          markers: calls.map((c) => ({
            intensity: fin(c.intensity), snr: fin(c.snr), amplitude: fin(c.amplitude), amplitudeUnconstrained: fin(c.amplitudeUnconstrained), spotDistancePx: c.spotDistancePx,
          })) as never,
        };
      });
      for (let i = 0; i < rows.length; i += BATCH) await tx.insert(vesicles).values(rows.slice(i, i + BATCH));
      await summariseLinkRun(tx, run.id, markers.length);
      await tx.update(fields).set({ status: 'linked', failureReason: null, progress: { stage: 'done', fraction: 1 }, version: sql`${fields.version} + 1`, updatedAt: sql`now()` }).where(eq(fields.id, fieldId));
    });
    return { vesicles: result.records.length, phenotypes: result.summary.phenotypeCounts };
  } catch (e) {
    // failing the link keeps the registration: the field stays "registered" with the reason shown
    const reason = e instanceof PermanentJobError ? e.message : `Linking failed: ${(e as Error).message}`;
    await db.update(fields).set({ status: 'registered', failureReason: reason, progress: null, version: sql`${fields.version} + 1` }).where(eq(fields.id, fieldId));
    throw e;
  }
}


