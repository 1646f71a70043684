import type { Db } from '../../db/client';
import { uploadOptions } from '../../db/queries/uploadOptions';
import type { SessionUser } from '../../auth/permissions';

/** The studies where `user` may upload (biologist member; admins: all), each with its samples and panel. */
export async function listUploadOptions(db: Db, user: SessionUser) {
  return uploadOptions(db, user);
}
