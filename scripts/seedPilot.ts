/**
 * The invented demo pilot: a study of its own (two donor groups of 5, an isotype and a buffer-only control,
 * two generated fields per sample) written once into the bucket and the database, with their ingestion
 * queued. scripts/lib/runPilot.ts then takes the fields through registration, linking, approval and release
 * with the real worker. Every name, code and number here is invented. Idempotent.
 */
import { and, eq, inArray } from 'drizzle-orm';
import type { Db } from '../src/lib/db/client';
import { fields, markerChannels, samples, studies, studyMembers, users } from '../src/lib/db/schema';
import type { Storage } from '../src/lib/storage/client';
import type { DetectionSettings } from '../src/lib/schemas/detectionSettings';
import { insertDemoField } from './seedDemoFields';
import { DEMO_PANEL, DEMO_USERS } from './seed';

export const PILOT_STUDY_NAME = 'Lakeside pancreas plasma EV pilot (invented demo)';

/** How far the pilot driver takes a field: released fields end approved inside a release. */
export type PilotTarget = 'ready' | 'registered' | 'linked' | 'released';

export interface PilotSample {
  code: string;
  groupLabel: string;
  controlKind: 'none' | 'isotype' | 'buffer_only';
  /** Probability that a labelled vesicle carries each marker (CD9, CD63, CD81) in this donor's fields (a third are unlabelled). */
  positiveFractions: [number, number, number];
  /** Per field: how far the driver takes it. */
  targets: [PilotTarget, PilotTarget];
  /** Scene options of this sample's fields beyond {@link PILOT_SCENE}. */
  scene?: { nbVesicles?: number; nbVesiclesOutsideAfm?: number };
}

// CD63 is the marker that differs: on about 55 % of labelled vesicles in the patient group, about 25 % in the
// healthy group (invented); CD9 and CD81 are alike in both. Donors vary a little, as real donors do.
const patient = (n: number, cd63: number, targets: [PilotTarget, PilotTarget] = ['released', 'released']): PilotSample => ({
  code: `PDAC-${String(n).padStart(2, '0')}`, groupLabel: 'pancreatic cancer', controlKind: 'none', positiveFractions: [0.45, cd63, 0.4], targets,
});
const healthy = (n: number, cd63: number, targets: [PilotTarget, PilotTarget] = ['released', 'released']): PilotSample => ({
  code: `HC-${String(n).padStart(2, '0')}`, groupLabel: 'healthy control', controlKind: 'none', positiveFractions: [0.45, cd63, 0.4], targets,
});

export const PILOT_SAMPLES: PilotSample[] = [
  // controls first: the groups' positivity thresholds come from the controls' linked vesicles
  { code: 'ISO-1', groupLabel: 'isotype control', controlKind: 'isotype', positiveFractions: [0.02, 0.02, 0.02], targets: ['released', 'released'] },
  // buffer through the same isolation: a little debris, free dye and the beads
  { code: 'BUF-1', groupLabel: 'buffer only', controlKind: 'buffer_only', positiveFractions: [0.02, 0.02, 0.02], targets: ['released', 'released'], scene: { nbVesicles: 12, nbVesiclesOutsideAfm: 8 } },
  patient(1, 0.58), patient(2, 0.52), patient(3, 0.6), patient(4, 0.5),
  healthy(1, 0.24), healthy(2, 0.28), healthy(3, 0.2), healthy(4, 0.26),
  // work left for the demo analyst and biologist: one field at each step
  patient(5, 0.55, ['linked', 'registered']),
  healthy(5, 0.25, ['ready', 'linked']),
];

export const PILOT_FIELD_NAMES = ['grid A1', 'grid B2'] as const;

/** Generator seed of one pilot field (distinct from the small demo study's 11, 31, 51). */
export const pilotSeed = (sampleIndex: number, fieldIndex: number) => 1000 + 10 * sampleIndex + fieldIndex;

/**
 * Scene of a pilot field, from the realistic correlative generator: 100–200 nm multicolour beads, tip-imaged
 * vesicles from dim to bright, a third of them unlabelled, dim single emitters and free dye, a 30 nm chromatic
 * shift per channel, an Airy PSF 15 % wider than the Gaussian the pipeline fits (no inverse crime), and a
 * fluorescence frame that holds vesicles outside the height map (and some of the map's vesicles outside it).
 */
export const PILOT_SCENE = {
  afmSizePx: 512, afmPixelNm: 10, flSizePx: 160, flPixelNm: 65, nbVesicles: 55, nbVesiclesOutsideAfm: 30, nbBeads: 6, chromaticShiftNmPerChannel: 30,
  afmCentreInFrame: { x: 0.78, y: 0.5 },
} as const;

/** Beads of 100–200 nm stand well above any vesicle (under 50 nm here): the bead cut-off goes to 80 nm for these fields. */
export const PILOT_DETECTION: DetectionSettings = {
  threshold: { method: 'robust', k: 3 }, minHeightNm: 2, minAreaNm2: 9 * 10 * 10, beadMinHeightNm: 80, levellingOrder: 1,
};

/** Creates the pilot study, its members, panel, samples and fields; queues ingestion of new fields. */
export async function seedPilot(db: Db, st: Storage, enqueue: (fieldId: string) => Promise<unknown>, log: (m: string) => void = () => undefined) {
  const people = await db.select({ id: users.id, email: users.email }).from(users).where(inArray(users.email, DEMO_USERS.map((u) => u.email)));
  const idOf = (role: string) => people.find((p) => p.email === DEMO_USERS.find((u) => u.role === role)!.email)?.id;
  let [study] = await db.select().from(studies).where(eq(studies.name, PILOT_STUDY_NAME));
  if (!study) {
    [study] = await db.insert(studies).values({
      name: PILOT_STUDY_NAME,
      description: 'Invented pilot: plasma EVs of five donors with pancreatic cancer and five healthy donors, with an isotype and a buffer-only control; '
        + 'size-exclusion chromatography, on mica, AFM in air and three-colour TIRF. CD63 is the marker expected to differ.',
      createdBy: idOf('admin'),
    }).returning();
  }
  for (const role of ['biologist', 'analyst', 'collaborator'] as const) {
    const userId = idOf(role);
    if (userId) await db.insert(studyMembers).values({ studyId: study.id, userId, role }).onConflictDoNothing();
  }
  for (const ch of DEMO_PANEL) await db.insert(markerChannels).values({ studyId: study.id, ...ch }).onConflictDoNothing();
  for (const s of PILOT_SAMPLES) {
    await db.insert(samples).values({
      studyId: study.id, code: s.code, groupLabel: s.groupLabel, controlKind: s.controlKind, source: 'plasma',
      isolationMethod: 'size-exclusion chromatography', substrate: 'mica', dilution: '1:10', collectionDate: '2026-02-01',
    }).onConflictDoNothing();
  }
  const rows = await db.select().from(samples).where(and(eq(samples.studyId, study.id), inArray(samples.code, PILOT_SAMPLES.map((s) => s.code))));
  const created: string[] = [];
  for (const [i, spec] of PILOT_SAMPLES.entries()) {
    const sample = rows.find((r) => r.code === spec.code)!;
    for (const [j, name] of PILOT_FIELD_NAMES.entries()) {
      const existing = await db.select({ id: fields.id }).from(fields).where(and(eq(fields.sampleId, sample.id), eq(fields.name, name)));
      if (existing.length) continue;
      const fieldId = await insertDemoField(db, st, {
        sampleId: sample.id, name, seed: pilotSeed(i, j), positiveFractions: spec.positiveFractions, createdBy: idOf('biologist'),
        filePrefix: `${spec.code}-f${j + 1}`, correlative: { ...PILOT_SCENE, ...spec.scene }, detectionSettings: PILOT_DETECTION,
      });
      await enqueue(fieldId);
      created.push(fieldId);
      if (created.length % 4 === 0) log(`demo pilot: generated ${created.length} new field(s) (${PILOT_SAMPLES.length * PILOT_FIELD_NAMES.length} in all)`);
    }
  }
  return { studyId: study.id, created };
}
