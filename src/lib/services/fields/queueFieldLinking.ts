import type { Db } from '../../db/client';
import { HttpError } from '../../http/errors';
import { queueLinking } from '../../jobs/enqueue';

/**
 * Queues linking of a registered (or already linked) field; progress shows on the field.
 * @throws HttpError 409 `not_registered` for a field without a registration, or an approved one
 */
export async function queueFieldLinking(db: Db, field: { id: string; status: string }) {
  if (!['registered', 'linked'].includes(field.status)) {
    throw new HttpError(409, 'not_registered', field.status === 'approved' ? 'This field is approved; send it back before linking again.' : 'Save a registration for this field before linking it.');
  }
  await queueLinking(db, [field.id]);
  return { id: field.id, queued: true };
}
