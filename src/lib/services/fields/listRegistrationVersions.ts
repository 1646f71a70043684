import type { Db } from '../../db/client';
import { listRegistrations } from '../../db/queries/registrations';

/** Every saved version of the field's registration, newest first. */
export async function listRegistrationVersions(db: Db, fieldId: string) {
  return listRegistrations(db, fieldId);
}
