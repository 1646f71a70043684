/**
 * Limits on sign-in and password-reset requests, kept in PostgreSQL by rate-limiter-flexible (table rate_limits,
 * pruned by the library every 5 minutes of rows expired over an hour ago), so every web process shares them.
 *
 * - Sign-in, per e-mail and address together: 5 failures are free, then each further attempt waits
 *   2, 4, 8 … s (up to 15 min) after the last failure. A success clears it. Growing delays instead of a hard
 *   lock: nobody can lock another person out, and a person who mistyped waits seconds (OWASP Authentication
 *   Cheat Sheet, "account lockout" alternatives; docs/references.md §11).
 * - Sign-in, per e-mail from all addresses: after 20 failures in an hour each attempt waits up to 60 s more, which
 *   slows guessing spread over many addresses without locking the owner out for long.
 * - Sign-in, per address: 100 failures in 15 minutes, then refused until the window ends (a whole lab may share
 *   one address behind NAT, so this is loose).
 * - Reset requests: 10 per address per hour (then 429), and 3 mails per e-mail address per hour (beyond that the
 *   reply is the same but no mail goes out: no mail flooding, nothing revealed).
 */
import { RateLimiterPostgres, RateLimiterRes } from 'rate-limiter-flexible';
import type { Db } from '../db/client';

const TABLE = 'rate_limits';
export const PAIR_FREE_FAILURES = 5;
export const PAIR_MAX_DELAY_S = 15 * 60;
export const EMAIL_FREE_FAILURES = 20;
export const EMAIL_MAX_DELAY_S = 60;
export const ADDRESS_MAX_FAILURES = 100;

export interface Verdict {
  allowed: boolean;
  /** Seconds to wait before the next try (0 when allowed). */
  retryAfterS: number;
}

interface Limiters {
  pairFailures: RateLimiterPostgres;
  pairDelay: RateLimiterPostgres;
  emailFailures: RateLimiterPostgres;
  emailDelay: RateLimiterPostgres;
  addressFailures: RateLimiterPostgres;
  resetPerAddress: RateLimiterPostgres;
  resetPerEmailHour: RateLimiterPostgres;
}

const cache = new WeakMap<object, Limiters>();

function limiters(db: Db): Limiters {
  const pool = db.$client;
  let l = cache.get(pool);
  if (l) return l;
  const make = (keyPrefix: string, points: number, duration: number) =>
    new RateLimiterPostgres({ storeClient: pool, storeType: 'pool', tableName: TABLE, tableCreated: true, keyPrefix, points, duration });
  l = {
    pairFailures: make('signin_pair', 1_000_000, 24 * 3600),
    pairDelay: make('signin_pair_wait', 1, 1),
    emailFailures: make('signin_email', 1_000_000, 3600),
    emailDelay: make('signin_email_wait', 1, 1),
    addressFailures: make('signin_addr', ADDRESS_MAX_FAILURES, 15 * 60),
    resetPerAddress: make('reset_addr', 10, 3600),
    resetPerEmailHour: make('reset_email1h', 3, 3600),
  };
  cache.set(pool, l);
  return l;
}

const waitOf = (r: RateLimiterRes | null, points: number) =>
  r && r.consumedPoints > points ? Math.max(1, Math.ceil(r.msBeforeNext / 1000)) : 0;

/** Delay after the n-th failure: free up to `free`, then doubling from 2 s, capped. */
export function failureDelayS(n: number, free: number, maxS: number): number {
  return n <= free ? 0 : Math.min(maxS, 2 ** (n - free));
}

/** Whether a sign-in for `email` from `ip` may be tried now. */
export async function signInVerdict(db: Db, email: string, ip: string): Promise<Verdict> {
  const l = limiters(db);
  const [pair, mail, addr] = await Promise.all([
    l.pairDelay.get(`${email}|${ip}`), l.emailDelay.get(email), l.addressFailures.get(ip),
  ]);
  const wait = Math.max(waitOf(pair, 1), waitOf(mail, 1), waitOf(addr, ADDRESS_MAX_FAILURES - 1));
  return { allowed: wait === 0, retryAfterS: wait };
}

/** Records a sign-in's outcome (a failure lengthens the waits, a success clears this address's). */
export async function recordSignIn(db: Db, email: string, ip: string, succeeded: boolean): Promise<void> {
  const l = limiters(db);
  const pairKey = `${email}|${ip}`;
  if (succeeded) {
    await Promise.all([l.pairFailures.delete(pairKey), l.pairDelay.delete(pairKey)]);
    return;
  }
  const [pair, mail] = await Promise.all([l.pairFailures.penalty(pairKey, 1), l.emailFailures.penalty(email, 1)]);
  await l.addressFailures.penalty(ip, 1);
  const pairWait = failureDelayS(pair.consumedPoints, PAIR_FREE_FAILURES, PAIR_MAX_DELAY_S);
  const mailWait = failureDelayS(mail.consumedPoints, EMAIL_FREE_FAILURES, EMAIL_MAX_DELAY_S);
  if (pairWait) await l.pairDelay.block(pairKey, pairWait);
  if (mailWait) await l.emailDelay.block(email, mailWait);
}

/**
 * Counts a reset request. `address` false: this address asked too often (answer 429); `mail` false: no mail
 * goes to this e-mail now (the reply stays the same).
 */
export async function resetRequestVerdict(db: Db, email: string, ip: string): Promise<{ address: Verdict; mail: boolean }> {
  const l = limiters(db);
  try {
    await l.resetPerAddress.consume(ip, 1);
  } catch (e) {
    if (e instanceof RateLimiterRes) return { address: { allowed: false, retryAfterS: Math.ceil(e.msBeforeNext / 1000) }, mail: false };
    throw e;
  }
  try {
    await l.resetPerEmailHour.consume(email, 1);
  } catch (e) {
    if (e instanceof RateLimiterRes) return { address: { allowed: true, retryAfterS: 0 }, mail: false };
    throw e;
  }
  return { address: { allowed: true, retryAfterS: 0 }, mail: true };
}
