/**
 * A sample's results with the spread of its group (between-sample quality control), from the two remembered
 * computations: the sample's results and the study's per-sample table of the same source (released or current),
 * so a collaborator's view of the group holds released samples only.
 */
import type { Db } from '../db/client';
import { studyComparison } from './comparisonCache';
import { groupSpread } from './groupSpread';
import { sampleResultsFor } from './sampleResultsCache';
import type { ResultsSelection } from './access';
import type { SampleResults } from './types';

export async function sampleResultsWithGroup(db: Db, sel: ResultsSelection): Promise<SampleResults> {
  const [results, table] = await Promise.all([sampleResultsFor(db, sel), studyComparison(db, sel.sample.studyId, sel.source, null, null)]);
  return { ...results, groupSpread: table ? groupSpread(table, sel.sample.id, sel.sample.groupLabel) : null };
}
