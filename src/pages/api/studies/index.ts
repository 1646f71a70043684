import type { APIRoute } from 'astro';
import { handle } from '../../../lib/http/respond';
import { parseJson } from '../../../lib/http/parse';
import { requireUser, requireRole } from '../../../lib/auth/session';
import { actor } from '../../../lib/http/actor';
import { StudyCreateRequest } from '../../../lib/schemas/people';
import { appDb } from '../../../lib/services/appDb';
import { listStudies } from '../../../lib/services/studies/listStudies';
import { createStudy } from '../../../lib/services/studies/createStudy';

export const GET = handle(async (ctx) => {
  const user = requireUser(ctx.locals);
  return Response.json({ studies: await listStudies(await appDb(), user) });
}) satisfies APIRoute;

/** Admins create studies, then add members with their study role. */
export const POST = handle(async (ctx) => {
  const admin = requireRole(ctx.locals, ['admin'], 'create studies');
  const body = await parseJson(ctx.request, StudyCreateRequest);
  return Response.json(await createStudy(await appDb(), actor(admin, ctx), body), { status: 201 });
}) satisfies APIRoute;
