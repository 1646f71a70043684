import type { Db } from '../../db/client';
import { getStudy, listMembers, listPanel } from '../../db/queries/studies';

/** A study with its members and marker panel (channel order). */
export async function getStudyOverview(db: Db, studyId: string) {
  const [study, members, panel] = await Promise.all([getStudy(db, studyId), listMembers(db, studyId), listPanel(db, studyId)]);
  return { study, members, panel };
}
