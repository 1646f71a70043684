import type { APIRoute } from 'astro';
import { handle } from '../../../../lib/http/respond';
import { parseJson, parseParams, IdParam } from '../../../../lib/http/parse';
import { requireStudyAction } from '../../../../lib/auth/session';
import { actor } from '../../../../lib/http/actor';
import { SampleCreateRequest } from '../../../../lib/schemas/fields';
import { appDb } from '../../../../lib/services/appDb';
import { listSamples } from '../../../../lib/services/samples/listSamples';
import { createSample } from '../../../../lib/services/samples/createSample';

export const GET = handle(async (ctx) => {
  const { id } = parseParams(ctx.params, IdParam);
  const db = await appDb();
  await requireStudyAction(db, ctx.locals, id, 'study.read', 'list samples');
  return Response.json({ samples: await listSamples(db, id) });
}) satisfies APIRoute;

/**
 * Biologists record a de-identified sample. The reply carries `warnings`: the sample form's messages when the code
 * or any free text looks like it holds a name, initials, a record number or a full date, so a script or another client hears them too; the sample is
 * recorded all the same (the check is a heuristic, and the form has already asked for confirmation).
 */
export const POST = handle(async (ctx) => {
  const { id } = parseParams(ctx.params, IdParam);
  const db = await appDb();
  const { user } = await requireStudyAction(db, ctx.locals, id, 'sample.write', 'record samples');
  const body = await parseJson(ctx.request, SampleCreateRequest);
  return Response.json(await createSample(db, actor(user, ctx), id, body), { status: 201 });
}) satisfies APIRoute;
