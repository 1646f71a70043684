import type { APIRoute } from 'astro';
import { handle } from '../../../lib/http/respond';
import { parseJson } from '../../../lib/http/parse';
import { requireRole } from '../../../lib/auth/session';
import { actor } from '../../../lib/http/actor';
import { appDb } from '../../../lib/services/appDb';
import { invitePerson } from '../../../lib/services/people/invitePerson';
import { InviteRequest } from '../../../lib/schemas/people';

/** Admin invites a person by e-mail: a user without password and a one-time link. */
export const POST = handle(async (ctx) => {
  const admin = requireRole(ctx.locals, ['admin'], 'invite people');
  const body = await parseJson(ctx.request, InviteRequest);
  const invited = await invitePerson(await appDb(), { ...actor(admin, ctx), name: admin.name }, body);
  return Response.json(invited, { status: 201 });
}) satisfies APIRoute;
