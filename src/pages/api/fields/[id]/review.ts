import type { APIRoute } from 'astro';
import { and, eq, sql } from 'drizzle-orm';
import { handle } from '../../../../lib/http/respond';
import { parseJson, parseParams, IdParam } from '../../../../lib/http/parse';
import { HttpError } from '../../../../lib/http/errors';
import { getDb } from '../../../../lib/db/client';
import { fields, fieldReviews, linkRuns } from '../../../../lib/db/schema';
import { requireFieldAction } from '../../../../lib/auth/fieldAccess';
import { audit } from '../../../../lib/audit';
import { ReviewRequest } from '../../../../lib/schemas/vesicles';
import { clientAddress } from '../../../../lib/http/context';

/**
 * Approves a linked field, or sends it back with a comment. The request names the field version the
 * reviewer saw; if the field changed since (another approval, a new linking), 409 and nothing is written.
 */
export const POST = handle(async (ctx) => {
  const { id } = parseParams(ctx.params, IdParam);
  const db = await getDb();
  const { user, field } = await requireFieldAction(db, ctx.locals, id, 'field.analyse', 'approve fields');
  const body = await parseJson(ctx.request, ReviewRequest);
  if (body.decision === 'approved' && field.status !== 'linked') throw new HttpError(409, 'conflict', 'Only a linked field can be approved.');
  if (body.decision === 'sent_back' && !['linked', 'approved'].includes(field.status)) throw new HttpError(409, 'conflict', 'Only a linked or approved field can be sent back.');
  if (body.decision === 'sent_back' && !body.comment) throw new HttpError(400, 'validation_failed', 'Say what needs fixing when you send a field back.');
  const next = body.decision === 'approved' ? 'approved' : 'registered';
  const done = await db.transaction(async (tx) => {
    const [row] = await tx.update(fields).set({ status: next, version: sql`${fields.version} + 1`, updatedAt: sql`now()` })
      .where(and(eq(fields.id, id), eq(fields.version, body.expectedVersion))).returning({ version: fields.version });
    if (!row) return null;
    const [run] = await tx.select({ id: linkRuns.id }).from(linkRuns).where(and(eq(linkRuns.fieldId, id), eq(linkRuns.current, true)));
    await tx.insert(fieldReviews).values({ fieldId: id, decision: body.decision, comment: body.comment, linkRunId: run?.id, reviewedBy: user.id });
    return row;
  });
  if (!done) throw new HttpError(409, 'stale_version', 'This field changed since you opened it (someone else reviewed or re-linked it). Reload to see its current state.');
  await audit(db, { action: body.decision === 'approved' ? 'field.approved' : 'field.sent_back', actorId: user.id, actorEmail: user.email, targetType: 'field', targetId: id, ip: clientAddress(ctx), details: { comment: body.comment } });
  return Response.json({ status: next, version: done.version });
}) satisfies APIRoute;
