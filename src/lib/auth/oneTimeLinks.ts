/** Invitations and password resets: one-time tokens, stored hashed, valid 72 h, single use. */
import { and, eq, gt, isNull } from 'drizzle-orm';
import { endAllSessions } from './sessionVersion';
import type { Db } from '../db/client';
import { oneTimeTokens, users } from '../db/schema';
import { HttpError } from '../http/errors';
import { hashPassword } from './passwords';
import { hashToken, newOneTimeToken, ONE_TIME_TOKEN_TTL_MS } from './tokens';

/**
 * Issues a token for `userId`; returns the clear token for the e-mail link. Every outstanding token of the same
 * purpose for that person stops working at once, so only the newest link sent can be used.
 */
export async function issueToken(db: Db, userId: string, purpose: 'invite' | 'reset', now = new Date()) {
  const { token, tokenHash } = newOneTimeToken();
  await db.transaction(async (tx) => {
    await tx.update(oneTimeTokens).set({ usedAt: now })
      .where(and(eq(oneTimeTokens.userId, userId), eq(oneTimeTokens.purpose, purpose), isNull(oneTimeTokens.usedAt)));
    await tx.insert(oneTimeTokens).values({ userId, purpose, tokenHash, expiresAt: new Date(now.getTime() + ONE_TIME_TOKEN_TTL_MS) });
  });
  return token;
}

/**
 * Consumes `token` and sets the user's password, atomically: a used, expired or unknown token
 * gets 400 and changes nothing. On success every other outstanding link of that person is void and
 * every existing session ends.
 */
export async function setPasswordWithToken(db: Db, token: string, password: string, now = new Date()) {
  const passwordHash = await hashPassword(password);
  return db.transaction(async (tx) => {
    const [row] = await tx
      .update(oneTimeTokens)
      .set({ usedAt: now })
      .where(and(eq(oneTimeTokens.tokenHash, hashToken(token)), isNull(oneTimeTokens.usedAt), gt(oneTimeTokens.expiresAt, now)))
      .returning({ userId: oneTimeTokens.userId, purpose: oneTimeTokens.purpose });
    if (!row) {
      throw new HttpError(400, 'invalid_token', 'This link has expired or was already used. Ask an administrator for a new invitation, or request a new reset link.');
    }
    const [user] = await tx.update(users).set({ passwordHash }).where(eq(users.id, row.userId)).returning({ id: users.id, email: users.email });
    // a new password ends every other link and every session of that person
    await tx.update(oneTimeTokens).set({ usedAt: now }).where(and(eq(oneTimeTokens.userId, row.userId), isNull(oneTimeTokens.usedAt)));
    await endAllSessions(tx, row.userId);
    return { ...user, purpose: row.purpose };
  });
}
