/**
 * A sample's results, remembered per web process under a key made of everything they are computed from, so a
 * change of any input is a new key and a stale answer cannot be served:
 * - the link runs of the selection (a link run's vesicles and summaries are written once and never changed),
 * - the release shown, the sample's own fields, the marker panel,
 * - the fingerprint of the sample's fields and their latest registrations (the per-field breakdown).
 * Four aggregate queries per request become none on a repeat (docs/benchmarks.md, "Load").
 */
import { LRUCache } from 'lru-cache';
import type { Db } from '../db/client';
import { getPanel } from '../db/queries/sampleSelection';
import { getSampleResults } from '../db/queries/sampleResults';
import { rememberedReply } from './rememberedReply';
import type { ResultsSelection } from './access';
import type { SampleResults } from './types';

const remembered = new LRUCache<string, SampleResults>({ max: 300, ttl: 10 * 60_000 });

/** The cache key of a selection: every input of getSampleResults. Exported for the tests. */
export function sampleResultsKey(sel: ResultsSelection, panel: { channelIndex: number; marker: string }[]): string {
  const { sample } = sel;
  return JSON.stringify([
    sample.id, sample.code, sample.groupLabel, sample.controlKind, sample.studyId, sample.studyName,
    sel.source, sel.release?.id ?? null, sel.release?.version ?? null, [...sel.linkRunIds].sort(),
    sel.fieldsFingerprint, panel.map((c) => [c.channelIndex, c.marker]),
  ]);
}

/** getSampleResults through the per-process memory ({@link rememberedReply}). */
export async function sampleResultsFor(db: Db, sel: ResultsSelection): Promise<SampleResults> {
  return rememberedReply(db, remembered, async () => sampleResultsKey(sel, await getPanel(db, sel.sample.studyId)), () => getSampleResults(db, sel.sample, sel));
}
