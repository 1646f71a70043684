/** The study's positivity settings per marker, and the fields whose current link run used other settings. */
import { and, asc, eq, inArray } from 'drizzle-orm';
import type { Db } from '../client';
import { fields, linkRuns, markerChannels, samples } from '../schema';
import { markersLinkedWithOtherSettings, positivityUsed, roundK, type MarkerPositivitySetting, type MarkerPositivityUsed } from '../../jobs/positivitySettings';

/** Each marker's k and hand-set threshold (counts), in channel order; k rounded back to its 0.1 step. */
export async function listPositivity(db: Db, studyId: string): Promise<(MarkerPositivitySetting & { channelIndex: number })[]> {
  const rows = await db.select().from(markerChannels).where(eq(markerChannels.studyId, studyId)).orderBy(asc(markerChannels.channelIndex));
  return rows.map((r) => ({ marker: r.marker, channelIndex: r.channelIndex, positivityK: roundK(r.positivityK), manualThresholdCounts: r.manualThresholdCounts }));
}

/** A linked or approved field whose current link run used other positivity settings than the panel's. */
export interface FieldLinkedWithOtherSettings {
  id: string;
  name: string;
  sampleCode: string;
  status: 'linked' | 'approved';
  /** Markers whose setting differs, with what the run used. */
  markers: { marker: string; used: MarkerPositivityUsed | null }[];
}

/**
 * Linked and approved fields of the study whose current link run differs from the settings (approved ones must be
 * sent back before they can be linked again).
 */
export async function fieldsLinkedWithOtherSettings(db: Db, studyId: string): Promise<FieldLinkedWithOtherSettings[]> {
  const panel = await listPositivity(db, studyId);
  const rows = await db
    .select({ id: fields.id, name: fields.name, status: fields.status, sampleCode: samples.code, settings: linkRuns.settings })
    .from(fields)
    .innerJoin(samples, eq(samples.id, fields.sampleId))
    .innerJoin(linkRuns, and(eq(linkRuns.fieldId, fields.id), eq(linkRuns.current, true)))
    .where(and(eq(samples.studyId, studyId), inArray(fields.status, ['linked', 'approved'])))
    .orderBy(asc(samples.code), asc(fields.name));
  return rows.flatMap((r) => {
    const differing = markersLinkedWithOtherSettings(r.settings, panel);
    if (!differing.length) return [];
    return [{
      id: r.id, name: r.name, sampleCode: r.sampleCode, status: r.status as 'linked' | 'approved',
      markers: differing.map((m) => ({ marker: m, used: positivityUsed(r.settings, m) })),
    }];
  });
}
