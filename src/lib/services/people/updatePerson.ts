import { eq } from 'drizzle-orm';
import type { Db } from '../../db/client';
import { users } from '../../db/schema';
import { HttpError, notFound } from '../../http/errors';
import { appAccessCache } from '../../auth/session';
import { endAllSessions } from '../../auth/sessionVersion';
import { audit } from '../../audit';
import type { Actor } from '../../http/actor';
import type { Role } from '../../auth/permissions';

/**
 * An admin changes a person's global role or deactivates them, not themselves (an admin cannot lock everyone out).
 * A new role or a deactivation ends the person's sessions at once: they sign in again under the new rules.
 * @throws HttpError 409 `conflict` for the admin themselves, 404 `not_found` for an unknown person
 */
export async function updatePerson(db: Db, by: Actor, personId: string, change: { role?: Role; active?: boolean }) {
  if (personId === by.id) throw new HttpError(409, 'conflict', 'You cannot change your own role or deactivate yourself; ask another administrator.');
  const [row] = await db.update(users).set(change).where(eq(users.id, personId)).returning({ id: users.id, role: users.role, active: users.active });
  if (!row) throw notFound('That person');
  await endAllSessions(db, personId);
  appAccessCache(db)?.forget({ userId: personId });
  await audit(db, { action: change.active === false ? 'user.deactivated' : 'user.role_changed', actorId: by.id, actorEmail: by.email, targetType: 'user', targetId: personId, ip: by.ip, details: change });
  return row;
}
