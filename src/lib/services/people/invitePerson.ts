import { eq } from 'drizzle-orm';
import type { Db } from '../../db/client';
import { users } from '../../db/schema';
import { HttpError } from '../../http/errors';
import { issueToken } from '../../auth/oneTimeLinks';
import { send, invitationMail } from '../../mail';
import { config } from '../../config';
import { audit } from '../../audit';
import type { Actor } from '../../http/actor';
import type { Role } from '../../auth/permissions';

/**
 * Invites a person by e-mail: a user without a password (kept if an earlier invitation made one) and a one-time link.
 * @throws HttpError 409 `conflict` when the address already has an account
 */
export async function invitePerson(db: Db, by: Actor & { name: string }, invite: { email: string; name: string; role: Role }) {
  const [existing] = await db.select({ id: users.id, hasPassword: users.passwordHash }).from(users).where(eq(users.email, invite.email));
  if (existing?.hasPassword) throw new HttpError(409, 'conflict', `${invite.email} already has an account.`);
  const userId = existing?.id ?? (await db.insert(users).values({ email: invite.email, name: invite.name, role: invite.role }).returning({ id: users.id }))[0].id;
  const token = await issueToken(db, userId, 'invite');
  const link = new URL(`/invite/${token}`, config().PUBLIC_URL).toString();
  await send(invitationMail({ to: invite.email, name: invite.name, invitedBy: by.name, link, role: invite.role }));
  await audit(db, { action: 'user.invited', actorId: by.id, actorEmail: by.email, targetType: 'user', targetId: userId, ip: by.ip, details: { email: invite.email, role: invite.role } });
  return { id: userId, email: invite.email };
}
