import type { APIRoute } from 'astro';
import { eq } from 'drizzle-orm';
import { handle } from '../../../lib/http/respond';
import { parseJson } from '../../../lib/http/parse';
import { HttpError } from '../../../lib/http/errors';
import { requireRole } from '../../../lib/auth/session';
import { getDb } from '../../../lib/db/client';
import { users } from '../../../lib/db/schema';
import { issueToken } from '../../../lib/auth/oneTimeLinks';
import { send, invitationMail } from '../../../lib/mail';
import { config } from '../../../lib/config';
import { audit } from '../../../lib/audit';
import { InviteRequest } from '../../../lib/schemas/people';
import { clientAddress } from '../../../lib/http/context';

/** Admin invites a person by e-mail: a user without password and a one-time link. */
export const POST = handle(async (ctx) => {
  const admin = requireRole(ctx.locals, ['admin'], 'invite people');
  const body = await parseJson(ctx.request, InviteRequest);
  const db = await getDb();
  const [existing] = await db.select({ id: users.id, hasPassword: users.passwordHash }).from(users).where(eq(users.email, body.email));
  if (existing?.hasPassword) throw new HttpError(409, 'conflict', `${body.email} already has an account.`);
  const userId = existing?.id ?? (await db.insert(users).values({ email: body.email, name: body.name, role: body.role }).returning({ id: users.id }))[0].id;
  const token = await issueToken(db, userId, 'invite');
  const link = new URL(`/invite/${token}`, config().PUBLIC_URL).toString();
  await send(invitationMail({ to: body.email, name: body.name, invitedBy: admin.name, link, role: body.role }));
  await audit(db, { action: 'user.invited', actorId: admin.id, actorEmail: admin.email, targetType: 'user', targetId: userId, ip: clientAddress(ctx), details: { email: body.email, role: body.role } });
  return Response.json({ id: userId, email: body.email }, { status: 201 });
}) satisfies APIRoute;
