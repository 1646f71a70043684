import type { APIRoute } from 'astro';
import { and, eq, inArray } from 'drizzle-orm';
import { handle } from '../../../../lib/http/respond';
import { parseJson, parseParams, IdParam } from '../../../../lib/http/parse';
import { conflict, HttpError } from '../../../../lib/http/errors';
import { requireStudyAction } from '../../../../lib/auth/session';
import { getDb } from '../../../../lib/db/client';
import { fields, samples } from '../../../../lib/db/schema';
import { queueLinking } from '../../../../lib/jobs/enqueue';
import { RelinkRequest } from '../../../../lib/schemas/positivity';

/**
 * Queues linking again, with the study's current positivity settings, of the given linked fields (analysts, admins).
 * Approved fields are skipped with a reason: they must be sent back first.
 */
export const POST = handle(async (ctx) => {
  const { id } = parseParams(ctx.params, IdParam);
  const db = await getDb();
  await requireStudyAction(db, ctx.locals, id, 'field.analyse', 'link fields');
  const body = await parseJson(ctx.request, RelinkRequest);
  const ids = [...new Set(body.fieldIds)];
  const rows = await db.select({ id: fields.id, name: fields.name, status: fields.status }).from(fields)
    .innerJoin(samples, eq(samples.id, fields.sampleId)).where(and(eq(samples.studyId, id), inArray(fields.id, ids)));
  if (rows.length !== ids.length) throw new HttpError(404, 'not_found', `${ids.length - rows.length} of the fields were not found in this study.`);
  const queued: string[] = [];
  const skipped: { id: string; name: string; reason: string }[] = [];
  for (const f of rows) {
    if (f.status === 'linked') queued.push(f.id);
    else skipped.push({ id: f.id, name: f.name, reason: f.status === 'approved' ? 'approved: send it back before linking again' : `not linked (status ${f.status})` });
  }
  if (!queued.length) throw conflict(`None of the fields can be linked again: ${skipped.map((s) => `${s.name} is ${s.reason}`).join('; ')}.`);
  await queueLinking(db, queued);
  return Response.json({ queued, skipped }, { status: 202 });
}) satisfies APIRoute;
