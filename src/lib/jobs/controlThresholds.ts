/**
 * Positivity thresholds from a study's control samples: for each marker, mean + k·SD of the control
 * vesicles' net aperture intensities (k = 3 by default; common practice). Markers without enough
 * control data are left out, so the pipeline falls back to background apertures for them.
 */
import { and, eq, ne } from 'drizzle-orm';
import type { Db } from '../db/client';
import { vesicles, samples, linkRuns } from '../db/schema';
import { thresholdFromControls } from '../analysis/linking';

export async function controlThresholds(db: Db, studyId: string, markers: string[], k = 3) {
  const rows = await db
    .select({ markers: vesicles.markers })
    .from(vesicles)
    .innerJoin(samples, eq(samples.id, vesicles.sampleId))
    .innerJoin(linkRuns, and(eq(linkRuns.id, vesicles.linkRunId), eq(linkRuns.current, true)))
    .where(and(eq(samples.studyId, studyId), ne(samples.controlKind, 'none'), eq(vesicles.outOfFrame, false)))
    .limit(200_000);
  const out: Record<string, { thresholdCounts: number; meanCounts: number; sdCounts: number; nbControls: number }> = {};
  markers.forEach((m, i) => {
    const values = rows.map((r) => r.markers[i]?.intensity).filter((v): v is number => Number.isFinite(v));
    if (values.length < 10) return;
    const t = thresholdFromControls(values, k);
    out[m] = { thresholdCounts: t.thresholdCounts, meanCounts: t.meanCounts, sdCounts: t.sdCounts, nbControls: t.nbControls };
  });
  return out;
}


