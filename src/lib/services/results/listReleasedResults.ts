import type { Db } from '../../db/client';
import { listReleasedSamples } from '../../db/queries/resultListings';
import type { SessionUser } from '../../auth/permissions';

/** The released samples `user` may read, with their study and latest release. */
export async function listReleasedResults(db: Db, user: SessionUser) {
  return listReleasedSamples(db, user);
}
