import type { APIRoute } from 'astro';
import { handle } from '../../../../lib/http/respond';
import { parseJson, parseParams, IdParam } from '../../../../lib/http/parse';
import { requireStudyAction } from '../../../../lib/auth/session';
import { actor } from '../../../../lib/http/actor';
import { MembershipRequest } from '../../../../lib/schemas/people';
import { appDb } from '../../../../lib/services/appDb';
import { setMembership } from '../../../../lib/services/studies/setMembership';

/** Admin adds, changes (role) or removes (role null) a study member. */
export const PUT = handle(async (ctx) => {
  const { id } = parseParams(ctx.params, IdParam);
  const db = await appDb();
  const { user } = await requireStudyAction(db, ctx.locals, id, 'study.manage', 'manage study members');
  const body = await parseJson(ctx.request, MembershipRequest);
  await setMembership(db, actor(user, ctx), id, body);
  return new Response(null, { status: 204 });
}) satisfies APIRoute;
