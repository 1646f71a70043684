/**
 * Specificity thresholds from a study's control samples, in the unit of the quantity that is called (joint
 * amplitude, counts of PSF amplitude): per marker and per control kind, the 0.99 quantile of the control vesicles'
 * joint amplitudes (controlQuantileThreshold). Isotype and secondary-only controls set thresholds; buffer-only
 * controls carry no antibody and never do. When both kinds have enough vesicles the stricter (higher) threshold is
 * used and both are returned. Markers whose controls have fewer than 100 measured vesicles are left out, so the
 * pipeline calls them on camera noise alone.
 */
import { and, eq, inArray } from 'drizzle-orm';
import type { Db } from '../db/client';
import { vesicles, samples, linkRuns } from '../db/schema';
import { controlQuantileThreshold, type ControlKindThreshold, type ThresholdControlKind } from '../analysis/linking';

/** One marker's control threshold: the chosen kind's, with every kind's for display. */
export interface ControlThreshold {
  readonly kind: ThresholdControlKind;
  /** The 0.99 quantile of the chosen kind's control amplitudes (counts). */
  readonly thresholdCounts: number;
  readonly nbControls: number;
  readonly quantile: number;
  readonly byKind: Partial<Record<ThresholdControlKind, ControlKindThreshold>>;
}

/**
 * @param db - the database
 * @param studyId - the study whose control samples are read
 * @param markers - every marker of the panel in channel order (values are read by channel index)
 * @param _k - ignored (kept while callers still pass the k of the older mean + k·SD rule; the threshold is a quantile)
 * @returns per marker with enough control vesicles: the chosen kind's threshold and every kind's
 */
export async function controlThresholds(db: Db, studyId: string, markers: string[], _k?: unknown): Promise<Record<string, ControlThreshold>> {
  const rows = await db
    .select({ markers: vesicles.markers, kind: samples.controlKind })
    .from(vesicles)
    .innerJoin(samples, eq(samples.id, vesicles.sampleId))
    .innerJoin(linkRuns, and(eq(linkRuns.id, vesicles.linkRunId), eq(linkRuns.current, true)))
    .where(and(eq(samples.studyId, studyId), inArray(samples.controlKind, ['isotype', 'secondary_only'])))
    .limit(400_000);
  const out: Record<string, ControlThreshold> = {};
  markers.forEach((m, i) => {
    const valuesByKind: Record<ThresholdControlKind, number[]> = { isotype: [], secondary_only: [] };
    for (const r of rows) {
      // a vesicle outside this channel's frame has no amplitude there (null) and is not a control value
      const v = (r.markers[i] as { amplitude?: number | null } | undefined)?.amplitude;
      if (typeof v === 'number' && Number.isFinite(v) && (r.kind === 'isotype' || r.kind === 'secondary_only')) valuesByKind[r.kind].push(v);
    }
    const t = controlQuantileThreshold(valuesByKind);
    if (t.chosen) out[m] = { ...t.chosen, byKind: t.byKind };
  });
  return out;
}
