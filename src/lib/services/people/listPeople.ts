import { asc } from 'drizzle-orm';
import type { Db } from '../../db/client';
import { users } from '../../db/schema';

/** Everyone with an account or an invitation, by e-mail; `pendingInvitation` while no password is set (admin page). */
export async function listPeople(db: Db) {
  const rows = await db
    .select({ id: users.id, email: users.email, name: users.name, role: users.role, active: users.active, invited: users.passwordHash })
    .from(users)
    .orderBy(asc(users.email));
  return rows.map(({ invited, ...r }) => ({ ...r, pendingInvitation: !invited }));
}
