import type { Db } from '../../db/client';
import { getChecklistInput } from '../../db/queries/checklistInput';
import { listResultGroups } from '../../db/queries/resultListings';
import { studyComparison } from '../../reporting/comparisonCache';
import { misevChecklist } from '../../reporting/misevChecklist';
import type { ResultSource } from '../../reporting/types';

/**
 * What the study comparison page shows: the comparison of two groups with results (the requested ones when they
 * exist and differ, else the first two) and the reporting checklist.
 * @param groupA - requested first group (from the URL), or null
 * @param groupB - requested second group, or null
 */
export async function loadStudyComparison(db: Db, studyId: string, source: ResultSource, groupA: string | null, groupB: string | null) {
  const groups = await listResultGroups(db, studyId, source);
  const a = groupA && groups.includes(groupA) ? groupA : groups[0];
  const b = groupB && groups.includes(groupB) && groupB !== a ? groupB : groups.find((g) => g !== a);
  const twoGroups = a !== undefined && b !== undefined;
  const comparison = (await studyComparison(db, studyId, source, twoGroups ? a : null, twoGroups ? b : null))!;
  const checklist = misevChecklist(await getChecklistInput(db, studyId));
  return { comparison, checklist };
}
