/**
 * Approves a linked field or sends it back, as the review route and the demo pilot both do. The caller names
 * the field version it saw; if the field changed since (another review, a new linking), nothing is written.
 */
import { and, eq, sql } from 'drizzle-orm';
import type { Db } from '../db/client';
import { fields, fieldReviews, linkRuns } from '../db/schema';
import { HttpError } from '../http/errors';

export async function reviewField(
  db: Db,
  field: { id: string; status: string },
  reviewerId: string,
  body: { decision: 'approved' | 'sent_back'; comment?: string; expectedVersion: number },
) {
  if (body.decision === 'approved' && field.status !== 'linked') throw new HttpError(409, 'conflict', 'Only a linked field can be approved.');
  if (body.decision === 'sent_back' && !['linked', 'approved'].includes(field.status)) throw new HttpError(409, 'conflict', 'Only a linked or approved field can be sent back.');
  if (body.decision === 'sent_back' && !body.comment) throw new HttpError(400, 'validation_failed', 'Say what needs fixing when you send a field back.');
  const next = body.decision === 'approved' ? 'approved' : 'registered';
  const done = await db.transaction(async (tx) => {
    const [row] = await tx.update(fields).set({ status: next, version: sql`${fields.version} + 1`, updatedAt: sql`now()` })
      .where(and(eq(fields.id, field.id), eq(fields.version, body.expectedVersion))).returning({ version: fields.version });
    if (!row) return null;
    const [run] = await tx.select({ id: linkRuns.id }).from(linkRuns).where(and(eq(linkRuns.fieldId, field.id), eq(linkRuns.current, true)));
    await tx.insert(fieldReviews).values({ fieldId: field.id, decision: body.decision, comment: body.comment, linkRunId: run?.id, reviewedBy: reviewerId });
    return row;
  });
  if (!done) throw new HttpError(409, 'stale_version', 'This field changed since you opened it (someone else reviewed or re-linked it). Reload to see its current state.');
  return { status: next, version: done.version };
}
