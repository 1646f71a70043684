import type { Db } from '../../db/client';
import { getFieldDetail } from '../../db/queries/fields';
import { listRegistrations } from '../../db/queries/registrations';
import { listPanel } from '../../db/queries/studies';

/** What the registration page needs: the field's tile layers and files, its saved registration versions, the study's panel. */
export async function loadRegisterPage(db: Db, fieldId: string, studyId: string) {
  const detail = await getFieldDetail(db, fieldId);
  const versions = await listRegistrations(db, fieldId);
  const panel = await listPanel(db, studyId);
  return { detail, versions, panel };
}
