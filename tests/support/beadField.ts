/**
 * A generated field whose beads are 200 nm tall (below the detector's 300 nm default bead cut-off; 100–200 nm
 * beads are common practice), written to the bucket and inserted as a failed field so that a biologist's
 * "retry" queues its ingestion through the app. The truth of the height map is returned with it.
 */
import { randomUUID } from 'node:crypto';
import { makeDemoPair } from '../../fixtures/demoScene';
import { makeHeightScene } from '../../src/lib/analysis/synthetic';
import { writeTiff } from '../../src/lib/imaging';
import type { Db } from '../../src/lib/db/client';
import { fields, fieldFiles } from '../../src/lib/db/schema';
import { createStorage } from '../../src/lib/storage/client';
import { putBytes } from '../../src/lib/storage/objects';
import { rawFileKey } from '../../src/lib/storage/keys';

export const BEAD_FIELD = { afmPx: 384, afmPixelNm: 13, seed: 907, beadHeightNm: 200, nbBeads: 4, nbVesicles: 40 } as const;

/** The height scene: the demo generator's vesicles (8–30 nm high, 35–80 nm base radius) and four 200 nm beads. */
export function beadScene() {
  const { afmPx, afmPixelNm, seed, beadHeightNm, nbBeads, nbVesicles } = BEAD_FIELD;
  return makeHeightScene({
    seed, width: afmPx, height: afmPx, pixelSizeNm: afmPixelNm, nbVesicles, nbBeads, beadHeightNm,
    baseRadiusRangeNm: [35, 80], heightRangeNm: [8, 30], minGapPx: 6, marginPx: 8,
  });
}

/** The fluorescence side only has to decode: the demo pair's stack of a scene of the same size serves. */
export function beadFluorescence() {
  return makeDemoPair({ seed: BEAD_FIELD.seed, afmSizePx: BEAD_FIELD.afmPx, afmPixelNm: BEAD_FIELD.afmPixelNm, flSizePx: 128, nbVesicles: 30 });
}

/** Inserts the bead field into a sample (status "failed", not queued); returns its id. */
export async function insertBeadField(db: Db, sampleId: string, name: string): Promise<string> {
  const env = process.env as Record<string, string>;
  const st = createStorage({ endpoint: env.S3_ENDPOINT, region: 'us-east-1', bucket: env.S3_BUCKET, accessKeyId: 'S3RVER', secretAccessKey: 'S3RVER', forcePathStyle: true });
  const { afmPx, afmPixelNm } = BEAD_FIELD;
  const fieldId = randomUUID();
  const topoId = randomUUID();
  const flId = randomUUID();
  const topo = writeTiff([beadScene().raster], { bitsPerSample: 32, sampleFormat: 'float', compression: 'deflate' });
  const fl = beadFluorescence().fluorescenceTiff;
  await putBytes(st, rawFileKey(fieldId, topoId), topo, 'image/tiff');
  await putBytes(st, rawFileKey(fieldId, flId), fl, 'image/tiff');
  await db.transaction(async (tx) => {
    await tx.insert(fields).values({
      id: fieldId, sampleId, name, status: 'failed', failureReason: 'not processed yet', afmPixelNm, afmScanSizeNm: afmPixelNm * afmPx,
      tipRadiusNm: 8, imagingMedium: 'air', scanMode: 'intermittent contact', flPixelNm: 65, objectiveNa: 1.4, exposureMs: 100, channelEmissionNm: [520, 590, 670],
      afmWidthPx: afmPx, afmHeightPx: afmPx, flWidthPx: 128, flHeightPx: 128,
    });
    await tx.insert(fieldFiles).values([
      { id: topoId, fieldId, kind: 'topography', objectKey: rawFileKey(fieldId, topoId), originalName: 'beads-height.tif', sizeBytes: topo.length, meta: { pageCount: 1 } },
      { id: flId, fieldId, kind: 'fluorescence', channelIndex: 0, objectKey: rawFileKey(fieldId, flId), originalName: 'beads-fluorescence.tif', sizeBytes: fl.length, meta: { pageCount: 3 } },
    ]);
  });
  return fieldId;
}
