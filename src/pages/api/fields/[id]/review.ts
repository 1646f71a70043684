import type { APIRoute } from 'astro';
import { handle } from '../../../../lib/http/respond';
import { parseJson, parseParams, IdParam } from '../../../../lib/http/parse';
import { getDb } from '../../../../lib/db/client';
import { reviewField } from '../../../../lib/review/reviewField';
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
  const done = await reviewField(db, field, user.id, body);
  await audit(db, { action: body.decision === 'approved' ? 'field.approved' : 'field.sent_back', actorId: user.id, actorEmail: user.email, targetType: 'field', targetId: id, ip: clientAddress(ctx), details: { comment: body.comment } });
  return Response.json(done);
}) satisfies APIRoute;
