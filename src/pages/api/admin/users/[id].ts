import type { APIRoute } from 'astro';
import { eq } from 'drizzle-orm';
import { handle } from '../../../../lib/http/respond';
import { parseJson, parseParams, IdParam } from '../../../../lib/http/parse';
import { HttpError, notFound } from '../../../../lib/http/errors';
import { appAccessCache, requireRole } from '../../../../lib/auth/session';
import { endAllSessions } from '../../../../lib/auth/sessionVersion';
import { getDb } from '../../../../lib/db/client';
import { users } from '../../../../lib/db/schema';
import { audit } from '../../../../lib/audit';
import { UpdateUserRequest } from '../../../../lib/schemas/people';
import { clientAddress } from '../../../../lib/http/context';

/** Admin changes a person's global role or deactivates them (not themselves: an admin cannot lock everyone out). */
export const PATCH = handle(async (ctx) => {
  const admin = requireRole(ctx.locals, ['admin'], 'change roles');
  const { id } = parseParams(ctx.params, IdParam);
  const body = await parseJson(ctx.request, UpdateUserRequest);
  if (id === admin.id) throw new HttpError(409, 'conflict', 'You cannot change your own role or deactivate yourself; ask another administrator.');
  const db = await getDb();
  const [row] = await db.update(users).set(body).where(eq(users.id, id)).returning({ id: users.id, role: users.role, active: users.active });
  if (!row) throw notFound('That person');
  // a new role or a deactivation ends the person's sessions at once: they sign in again under the new rules
  await endAllSessions(db, id);
  appAccessCache(db)?.forget({ userId: id });
  await audit(db, { action: body.active === false ? 'user.deactivated' : 'user.role_changed', actorId: admin.id, actorEmail: admin.email, targetType: 'user', targetId: id, ip: clientAddress(ctx), details: body });
  return Response.json(row);
}) satisfies APIRoute;
