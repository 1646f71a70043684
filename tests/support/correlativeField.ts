/**
 * A realistic correlative field (makeCorrelativeScene: tip-imaged caps, 100–200 nm multicolour beads, a wider Airy
 * PSF than the analysis fits, dim emitters, free dye, part of the AFM field outside the fluorescence frame, jittered
 * fiducial picks) written to the bucket as two TIFFs and inserted as a failed field, so that a biologist's "retry"
 * queues its ingestion through the app. The scene (truth) is returned with the field's id.
 */
import { randomUUID } from 'node:crypto';
import { makeCorrelativeScene } from '../../src/lib/analysis/synthetic';
import type { MakeCorrelativeSceneOptions } from '../../src/lib/analysis/synthetic/correlativeTypes';
import { writeTiff } from '../../src/lib/imaging';
import type { Db } from '../../src/lib/db/client';
import { fields, fieldFiles } from '../../src/lib/db/schema';
import { createStorage } from '../../src/lib/storage/client';
import { putBytes } from '../../src/lib/storage/objects';
import { rawFileKey } from '../../src/lib/storage/keys';

/** The demo panel's markers and emission wavelengths (nm), in channel order. */
const PANEL = [{ marker: 'CD9', emissionNm: 520 }, { marker: 'CD63', emissionNm: 590 }, { marker: 'CD81', emissionNm: 670 }] as const;

export function correlativeScene(seed: number, o: Omit<MakeCorrelativeSceneOptions, 'seed' | 'markers'> = {}) {
  return makeCorrelativeScene({ ...o, seed, markers: PANEL.map((p, i) => ({ ...p, positiveFraction: [0.6, 0.45, 0.5][i] })) });
}

/** Inserts the scene as a field of `sampleId` (status "failed", not queued); returns its id. */
export async function insertCorrelativeField(db: Db, sampleId: string, name: string, scene: ReturnType<typeof correlativeScene>): Promise<string> {
  const env = process.env as Record<string, string>;
  const st = createStorage({ endpoint: env.S3_ENDPOINT, region: 'us-east-1', bucket: env.S3_BUCKET, accessKeyId: 'S3RVER', secretAccessKey: 'S3RVER', forcePathStyle: true });
  const fieldId = randomUUID();
  const topoId = randomUUID();
  const flId = randomUUID();
  const topo = writeTiff([scene.heightNm], { bitsPerSample: 32, sampleFormat: 'float', compression: 'deflate' });
  // the rendered frames are whole camera counts within 16 bits already
  const fl = writeTiff(scene.channels.map((c) => c.raster), { bitsPerSample: 16, sampleFormat: 'uint', compression: 'deflate' });
  await putBytes(st, rawFileKey(fieldId, topoId), topo, 'image/tiff');
  await putBytes(st, rawFileKey(fieldId, flId), fl, 'image/tiff');
  const afmPx = scene.heightNm.width;
  const flPx = scene.channels[0].raster.width;
  await db.transaction(async (tx) => {
    await tx.insert(fields).values({
      id: fieldId, sampleId, name, status: 'failed', failureReason: 'not processed yet', afmPixelNm: scene.afmPixelNm, afmScanSizeNm: scene.afmPixelNm * afmPx,
      tipRadiusNm: scene.tip.radiusNm, imagingMedium: 'air', scanMode: 'intermittent contact', flPixelNm: scene.flPixelNm, objectiveNa: scene.numericalAperture,
      exposureMs: 100, channelEmissionNm: PANEL.map((p) => p.emissionNm), afmWidthPx: afmPx, afmHeightPx: scene.heightNm.height, flWidthPx: flPx, flHeightPx: scene.channels[0].raster.height,
    });
    await tx.insert(fieldFiles).values([
      { id: topoId, fieldId, kind: 'topography', objectKey: rawFileKey(fieldId, topoId), originalName: 'correlative-height.tif', sizeBytes: topo.length, meta: { pageCount: 1 } },
      { id: flId, fieldId, kind: 'fluorescence', channelIndex: 0, objectKey: rawFileKey(fieldId, flId), originalName: 'correlative-fluorescence.tif', sizeBytes: fl.length, meta: { pageCount: PANEL.length } },
    ]);
  });
  return fieldId;
}
