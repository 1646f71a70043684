import type { Db } from '../../db/client';
import { listStudiesFor } from '../../db/queries/studies';
import type { SessionUser } from '../../auth/permissions';

/** The studies `user` may open (admins: all), with their study role and sample count, by name. */
export async function listStudies(db: Db, user: SessionUser) {
  return listStudiesFor(db, user);
}
