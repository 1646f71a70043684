import { and, eq, gte, count } from 'drizzle-orm';
import type { Db } from '../db/client';
import { signInAttempts } from '../db/schema';

export const SIGN_IN_WINDOW_MS = 15 * 60 * 1000;
export const SIGN_IN_MAX_FAILURES = 10;
/** A whole lab may share one address behind NAT, so the per-address limit is looser. */
export const SIGN_IN_MAX_FAILURES_PER_ADDRESS = 50;

/** True when this e-mail or this address has had too many failed sign-ins in the window. */
export async function isSignInBlocked(db: Db, email: string, ip: string, now = new Date()): Promise<boolean> {
  const since = new Date(now.getTime() - SIGN_IN_WINDOW_MS);
  const [byEmail] = await db
    .select({ n: count() })
    .from(signInAttempts)
    .where(and(eq(signInAttempts.email, email), eq(signInAttempts.succeeded, false), gte(signInAttempts.at, since)));
  if (byEmail.n >= SIGN_IN_MAX_FAILURES) return true;
  const [byIp] = await db
    .select({ n: count() })
    .from(signInAttempts)
    .where(and(eq(signInAttempts.ip, ip), eq(signInAttempts.succeeded, false), gte(signInAttempts.at, since)));
  return byIp.n >= SIGN_IN_MAX_FAILURES_PER_ADDRESS;
}

export async function recordSignInAttempt(db: Db, email: string, ip: string, succeeded: boolean) {
  await db.insert(signInAttempts).values({ email, ip, succeeded });
}
