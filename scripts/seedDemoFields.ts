/**
 * Adds generated demo fields to the demo study's patient and control samples when they have none,
 * writes their files to the bucket and queues their ingestion. Idempotent.
 */
import { randomUUID } from 'node:crypto';
import { and, eq, inArray } from 'drizzle-orm';
import type { Db } from '../src/lib/db/client';
import { fields, fieldFiles, samples, studies, users } from '../src/lib/db/schema';
import type { Storage } from '../src/lib/storage/client';
import { putBytes } from '../src/lib/storage/objects';
import { rawFileKey } from '../src/lib/storage/keys';
import { inspectTiff } from '../src/lib/imaging';
import { makeCorrelativePair, makeDemoPair, type DemoPairOptions } from '../fixtures/demoScene';
import type { MakeCorrelativeSceneOptions } from '../src/lib/analysis/synthetic/correlativeTypes';
import type { DetectionSettings } from '../src/lib/schemas/detectionSettings';
import { DEMO_PANEL, DEMO_STUDY_NAME } from './seed';

export const DEMO_FIELDS: { code: string; name: string; seed: number; positiveFractions: number[] }[] = [
  { code: 'HCP-001', name: 'grid A1', seed: 11, positiveFractions: [0.7, 0.5, 0.6] },
  { code: 'HCP-003', name: 'grid A1', seed: 31, positiveFractions: [0.5, 0.2, 0.45] },
  { code: 'HCP-ISO', name: 'grid A1', seed: 51, positiveFractions: [0.02, 0.02, 0.02] },
];

export async function seedDemoFields(db: Db, st: Storage, enqueue: (fieldId: string) => Promise<unknown>) {
  const [study] = await db.select().from(studies).where(eq(studies.name, DEMO_STUDY_NAME));
  if (!study) return [];
  const [biologist] = await db.select().from(users).where(eq(users.email, 'biologist@demo.heightlight.test'));
  const rows = await db.select().from(samples).where(and(eq(samples.studyId, study.id), inArray(samples.code, DEMO_FIELDS.map((f) => f.code))));
  const created: string[] = [];
  for (const spec of DEMO_FIELDS) {
    const sample = rows.find((r) => r.code === spec.code);
    if (!sample) continue;
    const existing = await db.select({ id: fields.id }).from(fields).where(and(eq(fields.sampleId, sample.id), eq(fields.name, spec.name)));
    if (existing.length) continue;
    const fieldId = await insertDemoField(db, st, {
      sampleId: sample.id, name: spec.name, seed: spec.seed, positiveFractions: spec.positiveFractions, createdBy: biologist?.id, filePrefix: `${spec.code}-${spec.name.replace(' ', '')}`,
    });
    await enqueue(fieldId);
    created.push(fieldId);
  }
  return created;
}

/**
 * One generated field of a sample, its two files in the bucket and its rows, status "ingesting"
 * (not yet queued).
 * @returns the new field's id
 */
export async function insertDemoField(
  db: Db, st: Storage,
  o: {
    sampleId: string; name: string; seed: number; positiveFractions: number[]; createdBy?: string; filePrefix: string;
    /** Further options of the simple demo scene; the demo defaults otherwise. */
    scene?: Omit<DemoPairOptions, 'seed' | 'positiveFractions'>;
    /** Options of the realistic correlative generator instead (its markers get `positiveFractions` in panel order). */
    correlative?: Omit<MakeCorrelativeSceneOptions, 'seed' | 'markers'>;
    /** The field's detection settings (null: the automatic defaults). */
    detectionSettings?: DetectionSettings | null;
  },
): Promise<string> {
  const pair = o.correlative
    ? makeCorrelativePair({
      ...o.correlative, seed: o.seed,
      markers: DEMO_PANEL.map((p, i) => ({ marker: p.marker, emissionNm: p.emissionNm, positiveFraction: o.positiveFractions[i] ?? 0 })),
    })
    : makeDemoPair({ ...o.scene, seed: o.seed, positiveFractions: o.positiveFractions });
  const fieldId = randomUUID();
  const topoId = randomUUID();
  const flId = randomUUID();
  await putBytes(st, rawFileKey(fieldId, topoId), pair.topographyTiff, 'image/tiff');
  await putBytes(st, rawFileKey(fieldId, flId), pair.fluorescenceTiff, 'image/tiff');
  const tMeta = inspectTiff(pair.topographyTiff);
  const fMeta = inspectTiff(pair.fluorescenceTiff);
  await db.transaction(async (tx) => {
    await tx.insert(fields).values({
      id: fieldId, sampleId: o.sampleId, name: o.name, status: 'ingesting', afmPixelNm: pair.afmPixelNm, afmScanSizeNm: pair.afmPixelNm * tMeta.width,
      tipRadiusNm: 8, imagingMedium: 'air', scanMode: 'intermittent contact', flPixelNm: pair.flPixelNm, objectiveNa: 1.4, exposureMs: 100,
      channelEmissionNm: [520, 590, 670], afmWidthPx: tMeta.width, afmHeightPx: tMeta.height, flWidthPx: fMeta.width, flHeightPx: fMeta.height,
      createdBy: o.createdBy, progress: { stage: 'queued', fraction: 0 }, detectionSettings: o.detectionSettings ?? null,
    });
    await tx.insert(fieldFiles).values([
      { id: topoId, fieldId, kind: 'topography', objectKey: rawFileKey(fieldId, topoId), originalName: `${o.filePrefix}-height.tif`, sizeBytes: pair.topographyTiff.length, meta: { pageCount: 1 } },
      { id: flId, fieldId, kind: 'fluorescence', channelIndex: 0, objectKey: rawFileKey(fieldId, flId), originalName: `${o.filePrefix}-fluorescence.tif`, sizeBytes: pair.fluorescenceTiff.length, meta: { pageCount: 3 } },
    ]);
  });
  return fieldId;
}
