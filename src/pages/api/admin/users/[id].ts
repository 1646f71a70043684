import type { APIRoute } from 'astro';
import { handle } from '../../../../lib/http/respond';
import { parseJson, parseParams, IdParam } from '../../../../lib/http/parse';
import { requireRole } from '../../../../lib/auth/session';
import { actor } from '../../../../lib/http/actor';
import { appDb } from '../../../../lib/services/appDb';
import { updatePerson } from '../../../../lib/services/people/updatePerson';
import { UpdateUserRequest } from '../../../../lib/schemas/people';

/** Admin changes a person's global role or deactivates them (not themselves: an admin cannot lock everyone out). */
export const PATCH = handle(async (ctx) => {
  const admin = requireRole(ctx.locals, ['admin'], 'change roles');
  const { id } = parseParams(ctx.params, IdParam);
  const body = await parseJson(ctx.request, UpdateUserRequest);
  return Response.json(await updatePerson(await appDb(), actor(admin, ctx), id, body));
}) satisfies APIRoute;
