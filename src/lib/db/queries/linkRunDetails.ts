/** What the field page shows of one link run beside its vesicle table: per-marker calls and the bead list. */
import { asc, eq } from 'drizzle-orm';
import type { Db } from '../client';
import { beads, linkRunMarkerCounts } from '../schema';

/** One marker of a run: what "positive" means, the counts over the vesicles measured there, and chance colocalisation. */
export interface MarkerCallSummary {
  marker: string;
  channelIndex: number;
  /** The run's one sentence for what "positive" means for this marker (older runs: their threshold method). */
  meaning: string;
  rule: string | null;
  /** Vesicles inside this channel's frame (the denominator) and those called positive there. */
  nMeasured: number;
  nPositive: number;
  positiveFraction: number | null;
  /** Fraction called positive at randomly shifted positions (chance colocalisation); null when not measured. */
  chancePositiveFraction: number | null;
  /** Where the camera model came from ('given' by the study, or 'estimated' from the frame); null for older runs. */
  cameraSource: string | null;
}

type Settings = Record<string, unknown>;
const rec = (v: unknown) => (v && typeof v === 'object' ? (v as Record<string, unknown>) : {});
const numOrNull = (v: unknown) => (typeof v === 'number' && Number.isFinite(v) ? v : null);

/**
 * Per-marker summary of a link run, in channel order, from its stored counts (link_run_marker_counts) and the
 * settings and summary it saved.
 */
export async function markerCallSummary(db: Db, run: { id: string; settings: Settings; summary: Settings }): Promise<MarkerCallSummary[]> {
  const counts = await db.select().from(linkRunMarkerCounts).where(eq(linkRunMarkerCounts.linkRunId, run.id)).orderBy(asc(linkRunMarkerCounts.channelIndex));
  const markers = Array.isArray(run.settings.markers) ? (run.settings.markers as string[]) : [];
  const channels = rec(run.summary.channels);
  const sentences = rec(run.settings.ruleSentence);
  const rules = rec(run.settings.thresholdRule);
  const chance = rec(run.settings.chancePositiveFraction);
  const method = typeof run.settings.thresholdMethod === 'string' ? run.settings.thresholdMethod : '';
  return counts.map((c) => {
    const marker = markers[c.channelIndex] ?? `channel ${c.channelIndex + 1}`;
    const ch = rec(channels[marker]);
    const sentence = sentences[marker] ?? ch.ruleSentence;
    const older = method.split('; ').find((part) => part.startsWith(`${marker}: `))?.slice(marker.length + 2);
    return {
      marker,
      channelIndex: c.channelIndex,
      meaning: typeof sentence === 'string' ? sentence : older ?? 'not recorded for this linking',
      rule: typeof rules[marker] === 'string' ? (rules[marker] as string) : null,
      nMeasured: c.nMeasured,
      nPositive: c.nPositive,
      positiveFraction: c.nMeasured > 0 ? c.nPositive / c.nMeasured : null,
      chancePositiveFraction: numOrNull(chance[marker]) ?? numOrNull(ch.chancePositiveFraction),
      cameraSource: typeof ch.cameraSource === 'string' ? ch.cameraSource : null,
    };
  });
}

/** The run's beads in index order. */
export function listBeads(db: Db, linkRunId: string) {
  return db.select().from(beads).where(eq(beads.linkRunId, linkRunId)).orderBy(asc(beads.index));
}
