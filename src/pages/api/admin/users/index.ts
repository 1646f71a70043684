import type { APIRoute } from 'astro';
import { handle } from '../../../../lib/http/respond';
import { requireRole } from '../../../../lib/auth/session';
import { appDb } from '../../../../lib/services/appDb';
import { listPeople } from '../../../../lib/services/people/listPeople';

export const GET = handle(async (ctx) => {
  requireRole(ctx.locals, ['admin'], 'list people');
  return Response.json({ users: await listPeople(await appDb()) });
}) satisfies APIRoute;
