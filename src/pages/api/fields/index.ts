import type { APIRoute } from 'astro';
import { handle } from '../../../lib/http/respond';
import { parseJson } from '../../../lib/http/parse';
import { requireUser } from '../../../lib/auth/session';
import { requireSampleAction } from '../../../lib/auth/sampleAccess';
import { actor } from '../../../lib/http/actor';
import { FieldCreateRequest } from '../../../lib/schemas/fields';
import { appDb } from '../../../lib/services/appDb';
import { addField } from '../../../lib/services/fields/addField';

/** Confirms a field from inspected uploads and queues its ingestion. */
export const POST = handle(async (ctx) => {
  requireUser(ctx.locals);
  const body = await parseJson(ctx.request, FieldCreateRequest);
  const db = await appDb();
  const { user, sample } = await requireSampleAction(db, ctx.locals, body.sampleId, 'sample.write', 'upload fields');
  return Response.json(await addField(db, actor(user, ctx), sample, body), { status: 201 });
}) satisfies APIRoute;
