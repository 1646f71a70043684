/**
 * The ingestion job: decode a field's files in a sandboxed thread, level the height map, detect
 * vesicles, fiducial candidates and spots, render the tile pyramids, and mark the field ready.
 * Idempotent: a re-run replaces the field's tiles and detection in one transaction.
 */
import { eq, asc, sql } from 'drizzle-orm';
import type { Db } from '../db/client';
import { fields, fieldFiles, tileSets, samples, markerChannels, registrations } from '../db/schema';
import type { Storage } from '../storage/client';
import { putBytes } from '../storage/objects';
import { detectionKey, tilePrefix } from '../storage/keys';
import { ImagingError } from '../imaging';
import { decodeStoredFile, type DecodeLimits } from './decodeStoredFile';
import { correctBackground, detectSpots, psfSigmaPx } from '../analysis/fluorescence';
import type { Raster } from '../analysis/types';
import { DEFAULT_EMISSION_NM, DEFAULT_NUMERICAL_APERTURE } from '../analysis/pipeline/opticsDefaults';
import { renderHeightLayer, renderChannelLayer, TILE_OVERLAP, TILE_SIZE } from './renderLayers';
import { setFieldProgress, failField } from './progress';
import type { FieldDetection } from './detectionTypes';
import { detectionLists, fieldHeightMap } from './fieldHeightMap';

export interface IngestDeps { db: Db; st: Storage; decodeLimits: DecodeLimits }

/** Thrown for a problem with the data itself: the job fails at once, without retries. */
export class PermanentJobError extends Error {}

export async function ingestField(deps: IngestDeps, fieldId: string) {
  const { db, st } = deps;
  const [field] = await db.select().from(fields).where(eq(fields.id, fieldId));
  if (!field) return; // deleted since it was queued
  const [sample] = await db.select().from(samples).where(eq(samples.id, field.sampleId));
  const panel = await db.select().from(markerChannels).where(eq(markerChannels.studyId, sample.studyId)).orderBy(asc(markerChannels.channelIndex));
  const files = await db.select().from(fieldFiles).where(eq(fieldFiles.fieldId, fieldId)).orderBy(asc(fieldFiles.channelIndex));
  const progress = (stage: string, f: number) => setFieldProgress(db, fieldId, stage, f);

  try {
    await db.update(fields).set({ status: 'ingesting', failureReason: null }).where(eq(fields.id, fieldId));
    await progress('reading files', 0.02);
    const decode = (key: string) => decodeStoredFile(st, key, deps.decodeLimits);
    const topoFile = files.find((f) => f.kind === 'topography');
    if (!topoFile) throw new PermanentJobError('The field has no height map file.');
    const topo = await decode(topoFile.objectKey);
    const height: Raster = topo.pages[0];

    await progress('levelling and detecting vesicles', 0.15);
    // the same call linking makes, so the vesicles shown for review are the ones linking measures
    const { afm, settingsUsed } = fieldHeightMap(field, height);

    await progress('rendering the height map', 0.3);
    const layers: { layer: string; prefix: string; width: number; height: number; display: Record<string, unknown> }[] = [];
    const beadLabels = new Set(afm.fiducialCandidates.map((b) => b.label));
    const h = await renderHeightLayer(st, fieldId, afm.levelling.levelled, (i) => beadLabels.has(afm.labels[i]));
    layers.push({ layer: 'height', prefix: h.prefix, width: height.width, height: height.height, display: h.display });

    const frames: Raster[] = [];
    for (const f of files.filter((x) => x.kind === 'fluorescence')) frames.push(...(await decode(f.objectKey)).pages);
    const spots: FieldDetection['spots'] = [];
    for (let c = 0; c < frames.length; c++) {
      await progress(`channel ${c + 1} of ${frames.length}: spots and tiles`, 0.4 + (0.55 * c) / frames.length);
      // the same fallback as linking, so registration shows the spots linking will use
      const emissionNm = field.channelEmissionNm[c] ?? panel[c]?.emissionNm ?? DEFAULT_EMISSION_NM;
      const sigmaPx = psfSigmaPx(emissionNm, field.objectiveNa ?? DEFAULT_NUMERICAL_APERTURE, field.flPixelNm!);
      const bg = correctBackground(frames[c], {});
      const found = detectSpots(bg.corrected, { sigmaPx, refine: 'centroid' });
      spots.push({ channelIndex: c, marker: panel[c]?.marker ?? `channel ${c + 1}`, sigmaPx, spots: found.spots.map((s) => ({ x: s.x, y: s.y, integratedCounts: s.integratedCounts, snr: s.snr })) });
      const r = await renderChannelLayer(st, fieldId, c, frames[c], emissionNm);
      layers.push({ layer: `ch${c}`, prefix: r.prefix, width: frames[c].width, height: frames[c].height, display: { ...r.display, marker: panel[c]?.marker ?? null } });
    }

    const detection: FieldDetection = {
      afmPixelNm: field.afmPixelNm!,
      flPixelNm: field.flPixelNm!,
      settings: settingsUsed,
      thresholdNm: afm.threshold.thresholdNm,
      backgroundSigmaNm: afm.levelling.backgroundSigmaNm,
      ...detectionLists(afm),
      spots,
    };
    await putBytes(st, detectionKey(fieldId), JSON.stringify(detection), 'application/json');

    await progress('saving', 0.97);
    await db.transaction(async (tx) => {
      // one writer per field at a time (a retried job may overlap its first run)
      await tx.execute(sql`select id from fields where id = ${fieldId} for update`);
      await tx.delete(tileSets).where(eq(tileSets.fieldId, fieldId));
      for (const l of layers) {
        await tx.insert(tileSets).values({ fieldId, layer: l.layer, prefix: l.prefix, widthPx: l.width, heightPx: l.height, tileSize: TILE_SIZE, overlap: TILE_OVERLAP, format: 'png', display: l.display });
      }
      // new vesicles make any earlier linking stale: back to "registered" when a registration exists, else "ready"
      const [reg] = await tx.select({ id: registrations.id }).from(registrations).where(eq(registrations.fieldId, fieldId)).limit(1);
      await tx.update(fields).set({ status: reg ? 'registered' : 'ready', failureReason: null, progress: { stage: 'done', fraction: 1 }, version: sql`${fields.version} + 1`, updatedAt: sql`now()` }).where(eq(fields.id, fieldId));
    });
    return { vesicles: detection.vesicles.length, fiducials: detection.fiducialCandidates.length, spots: spots.map((s) => s.spots.length) };
  } catch (e) {
    const reason = e instanceof ImagingError || e instanceof PermanentJobError ? e.message : `Processing failed: ${(e as Error).message}`;
    await failField(db, fieldId, reason);
    throw e;
  }
}

export { tilePrefix };
