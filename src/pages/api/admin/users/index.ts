import type { APIRoute } from 'astro';
import { asc } from 'drizzle-orm';
import { handle } from '../../../../lib/http/respond';
import { requireRole } from '../../../../lib/auth/session';
import { getDb } from '../../../../lib/db/client';
import { users } from '../../../../lib/db/schema';

export const GET = handle(async (ctx) => {
  requireRole(ctx.locals, ['admin'], 'list people');
  const db = await getDb();
  const rows = await db
    .select({ id: users.id, email: users.email, name: users.name, role: users.role, active: users.active, invited: users.passwordHash })
    .from(users)
    .orderBy(asc(users.email));
  return Response.json({ users: rows.map(({ invited, ...r }) => ({ ...r, pendingInvitation: !invited })) });
}) satisfies APIRoute;
