import type { Db } from '../../db/client';
import { pageVesicles } from '../../db/queries/vesicles';
import { getPanel } from '../../db/queries/sampleSelection';
import { researchUseReply } from '../../reporting/researchUse';
import type { VesicleQuery } from '../../schemas/vesicles';

/**
 * One page of the vesicle table of a field or a sample (current linking), sorted and filtered in the database, with
 * the study's marker names and the research-use notice.
 */
export async function pageVesicleTable(db: Db, studyId: string, q: VesicleQuery) {
  const [page, panel] = await Promise.all([pageVesicles(db, q), getPanel(db, studyId)]);
  return researchUseReply({ ...page, markers: panel.map((p) => p.marker) });
}
