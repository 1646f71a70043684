import type { z } from 'zod';
import type { Db } from '../../db/client';
import { reviewField } from '../../review/reviewField';
import { audit } from '../../audit';
import type { Actor } from '../../http/actor';
import type { ReviewRequest } from '../../schemas/vesicles';

/**
 * Approves a linked field or sends it back (`reviewField`: the status change and the review row in one transaction,
 * guarded by the version the reviewer saw) and audits the decision with its comment.
 * @returns the field's new status and version
 * @throws HttpError 409 `conflict` / `stale_version`, 400 `validation_failed` for a send-back without a comment
 */
export async function recordReview(db: Db, by: Actor, field: { id: string; status: string }, body: z.infer<typeof ReviewRequest>) {
  const done = await reviewField(db, field, by.id, body);
  await audit(db, { action: body.decision === 'approved' ? 'field.approved' : 'field.sent_back', actorId: by.id, actorEmail: by.email, targetType: 'field', targetId: field.id, ip: by.ip, details: { comment: body.comment } });
  return done;
}
