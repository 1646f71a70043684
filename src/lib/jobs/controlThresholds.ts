/**
 * Positivity thresholds from a study's control samples, in the unit of the quantity that is called:
 * for each marker, mean + k·SD of the control vesicles' joint amplitudes (counts of PSF amplitude;
 * k = 3 by default, common practice). The unconstrained amplitude is used where stored, since the
 * non-negative one is clipped at 0 and would understate the SD; rows linked before it was stored
 * give their non-negative amplitude. Markers with fewer than 10 control values are left out, so the
 * pipeline falls back to amplitudes at empty places of the frame for them.
 */
import { and, eq, ne } from 'drizzle-orm';
import type { Db } from '../db/client';
import { vesicles, samples, linkRuns } from '../db/schema';
import { thresholdFromControls } from '../analysis/linking';

/**
 * @param markers - every marker of the panel in channel order (values are read by channel index)
 * @param k - k of mean + k·SD, one number for every marker or one per marker (markers left out get 3)
 * @returns per marker with at least 10 control values: threshold, mean and SD (counts), number of values and k
 */
export async function controlThresholds(db: Db, studyId: string, markers: string[], k: number | Readonly<Record<string, number>> = 3) {
  const rows = await db
    .select({ markers: vesicles.markers })
    .from(vesicles)
    .innerJoin(samples, eq(samples.id, vesicles.sampleId))
    .innerJoin(linkRuns, and(eq(linkRuns.id, vesicles.linkRunId), eq(linkRuns.current, true)))
    .where(and(eq(samples.studyId, studyId), ne(samples.controlKind, 'none'), eq(vesicles.outOfFrame, false)))
    .limit(200_000);
  const out: Record<string, { thresholdCounts: number; meanCounts: number; sdCounts: number; nbControls: number; k: number }> = {};
  markers.forEach((m, i) => {
    const values = rows
      .map((r) => {
        const c = r.markers[i] as { amplitude?: number | null; amplitudeUnconstrained?: number | null } | undefined;
        return c?.amplitudeUnconstrained ?? c?.amplitude;
      })
      .filter((v): v is number => Number.isFinite(v));
    if (values.length < 10) return;
    const km = typeof k === 'number' ? k : (k[m] ?? 3);
    const t = thresholdFromControls(values, km);
    out[m] = { thresholdCounts: t.thresholdCounts, meanCounts: t.meanCounts, sdCounts: t.sdCounts, nbControls: t.nbControls, k: km };
  });
  return out;
}


