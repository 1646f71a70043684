import type { Db } from '../../db/client';
import { fieldsLinkedWithOtherSettings, listPositivity } from '../../db/queries/positivity';

/** The study's positivity settings per marker (channel order) and the fields whose current linking used other settings. */
export async function getPositivity(db: Db, studyId: string) {
  return { markers: await listPositivity(db, studyId), fieldsLinkedWithOtherSettings: await fieldsLinkedWithOtherSettings(db, studyId) };
}
