/**
 * Server-side session revocation: the session cookie (an Auth.js JWT) carries `sv`, the user's session version
 * when it was issued; every request compares it with users.session_version (lib/auth/session.ts). Raising the
 * version ends every session of that person at once, on every web process (the users trigger announces it).
 */
import { eq, sql } from 'drizzle-orm';
import type { Db } from '../db/client';
import { users } from '../db/schema';
import { forgetUserAccess } from './session';

type Tx = Parameters<Parameters<Db['transaction']>[0]>[0];

/**
 * Ends every existing session of `userId`.
 *
 * @param db - the database or an open transaction
 * @param userId - whose sessions end
 */
export async function endAllSessions(db: Db | Tx, userId: string): Promise<void> {
  await db.update(users).set({ sessionVersion: sql`${users.sessionVersion} + 1` }).where(eq(users.id, userId));
  // this process's next request must not use the remembered row (other processes hear the users trigger)
  forgetUserAccess(userId);
}

/** The current session version of `userId` (0 for an unknown id). */
export async function currentSessionVersion(db: Db, userId: string): Promise<number> {
  const [row] = await db.select({ v: users.sessionVersion }).from(users).where(eq(users.id, userId));
  return row?.v ?? 0;
}
