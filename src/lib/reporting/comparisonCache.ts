/**
 * A study's group comparison, remembered per web process under a key of everything it is computed from (the
 * samples, their groups and the link runs selected, the panel, the groups asked for), as the sample results are
 * (sampleResultsCache.ts): a change of any input is a new key, so a stale answer cannot be served.
 */
import { LRUCache } from 'lru-cache';
import type { Db } from '../db/client';
import { getComparisonFacts, getComparisonRows } from '../db/queries/comparisonInput';
import { getPanel } from '../db/queries/sampleSelection';
import { buildStudyComparison } from './buildStudyComparison';
import { rememberedReply } from './rememberedReply';
import type { ResultSource, StudyComparison } from './types';

const remembered = new LRUCache<string, StudyComparison>({ max: 200, ttl: 10 * 60_000 });

/**
 * The comparison of groups A and B (null: no pair) in study `studyId`, or null when there is no such study.
 */
export async function studyComparison(db: Db, studyId: string, source: ResultSource, groupA: string | null, groupB: string | null): Promise<StudyComparison | null> {
  const facts = await getComparisonFacts(db, studyId, source);
  if (!facts) return null;
  const study = { id: studyId, name: facts.name };
  return rememberedReply(
    db, remembered,
    async () => JSON.stringify([studyId, facts.name, source, groupA, groupB, facts.fingerprint, (await getPanel(db, studyId)).map((c) => [c.channelIndex, c.marker])]),
    async () => {
      const [panel, rows] = await Promise.all([getPanel(db, studyId), getComparisonRows(db, studyId, source)]);
      return buildStudyComparison({ study, source, panel, rows, groupA, groupB });
    },
  );
}
