/**
 * Issue 14, findings 2–5 and 7: client address, sign-in and reset limits, session revocation, reset-link
 * invalidation, the sign-in redirect, and the reset reply for unknown accounts. Against the running app,
 * PostgreSQL and the job worker of npm test.
 */
import { describe, expect, beforeEach, afterAll } from 'vitest';
import { eq, like, sql } from 'drizzle-orm';
import { AppClient, APP_URL, signedIn as signInWith } from '../support/client';
import { DEMO, DEMO_PASSWORD } from '../support/demo';
import { waitForMail, linkIn } from '../support/mailSink';
import { test, it } from '../support/fixtures';
import type { Db } from '../../src/lib/db/client';
import { auditLog, rateLimits, users } from '../../src/lib/db/schema';

const unique = (what: string) => `${what}-${Date.now()}-${Math.floor(Math.random() * 1e6)}@lab.example`;
let db: Db;
let admin: AppClient;

test.beforeAll(async ({ db: fileDb, signedIn }) => {
  db = fileDb;
  admin = await signedIn('admin');
});
// every reset request here comes from 127.0.0.1: each test starts with that address's hourly allowance
beforeEach(async () => { await db.delete(rateLimits).where(like(rateLimits.key, 'reset_addr:%')); });
afterAll(async () => {
  // this file's reset requests all come from 127.0.0.1: give other test files their hourly allowance back
  await db.delete(rateLimits).where(like(rateLimits.key, 'reset_addr:%'));
});

/** An invited person with a password, signed out. */
async function person(role: 'biologist' | 'analyst' | 'collaborator', password: string): Promise<string> {
  const email = unique(role);
  expect((await admin.json('/api/admin/invitations', 'POST', { email, name: 'Test Person', role })).status).toBe(201);
  const { token } = linkIn((await waitForMail(email, 'invitation')).text);
  expect((await new AppClient().json('/api/invitations/accept', 'POST', { token, password })).status).toBe(200);
  return email;
}

/**
 * The tokens of the reset mails to `email`, once at least `n` are readable (a mail file can be caught half
 * written, so unreadable ones are read again).
 */
async function resetTokens(email: string, n: number): Promise<string[]> {
  const { readSink } = await import('../../src/lib/mail/sinkReader');
  for (let i = 0; i < 300; i++) {
    const tokens = (await readSink(process.env.MAIL_SINK_DIR!, 2000))
      .filter((m) => m.to.includes(email) && m.subject.includes('Reset'))
      .map((m) => /\/invite\/([A-Za-z0-9_-]{20,})/.exec(m.text ?? '')?.[1])
      .filter((t): t is string => !!t);
    const unique = [...new Set(tokens)];
    if (unique.length >= n) return unique;
    await new Promise((r) => setTimeout(r, 200));
  }
  throw new Error(`fewer than ${n} readable reset mail(s) to ${email} within 60 s`);
}

/** Signs in with a chosen X-Forwarded-For header; returns Auth.js's error code or null. */
async function signInFrom(email: string, password: string, forwardedFor?: string): Promise<string | null> {
  const c = new AppClient();
  const { csrfToken } = await (await c.fetch('/api/auth/csrf')).json();
  const res = await c.fetch('/api/auth/callback/credentials', {
    method: 'POST',
    headers: { 'content-type': 'application/x-www-form-urlencoded', 'x-auth-return-redirect': '1', ...(forwardedFor ? { 'x-forwarded-for': forwardedFor } : {}) },
    body: new URLSearchParams({ email, password, csrfToken, callbackUrl: `${APP_URL}/` }),
  });
  const url = new URL((await res.json()).url);
  return url.searchParams.get('error') ? (url.searchParams.get('code') ?? url.searchParams.get('error')) : null;
}

describe('client address and sign-in limits', () => {
  it('slows guessing with growing delays that a rotated X-Forwarded-For does not escape, and records the real address', async () => {
    const email = await person('biologist', 'right-password-7');
    // 5 failures are free; the 6th starts a 2 s wait (each from a different claimed address)
    for (let i = 0; i < 6; i++) expect(await signInFrom(email, `wrong-${i}-pw`, `203.0.113.${i + 1}`)).toBe('credentials');
    expect(await signInFrom(email, 'right-password-7', '198.51.100.77')).toBe('too_many_attempts');
    // the audit log names the socket's address, never a claimed one
    const rows = await db.select({ ip: auditLog.ip }).from(auditLog).where(eq(auditLog.actorEmail, email));
    const ips = new Set(rows.map((r) => r.ip));
    expect(ips.has('203.0.113.1')).toBe(false);
    expect(ips.has('198.51.100.77')).toBe(false);
    expect([...ips].every((ip) => ip === '127.0.0.1' || ip === '::1')).toBe(true);
    // a delay, not a lock: after the wait the right password works, and a success clears the count
    await new Promise((r) => setTimeout(r, 2500));
    expect(await signInFrom(email, 'right-password-7')).toBeNull();
    expect(await signInFrom(email, 'wrong-again-pw')).toBe('credentials');
    // someone else at the same address was never held up
    expect(await signInFrom(DEMO.biologist, DEMO_PASSWORD)).toBeNull();
  });

  it('limits reset requests per address (429 with a message) without mailing more than allowed', async () => {
    const email = await person('analyst', 'some-password-8');
    const statuses: number[] = [];
    for (let i = 0; i < 11; i++) statuses.push((await new AppClient().json('/api/password-reset', 'POST', { email: i < 5 ? email : unique('nobody') })).status);
    expect(statuses.slice(0, 10)).toEqual(Array(10).fill(202));
    const last = await new AppClient().json('/api/password-reset', 'POST', { email: unique('nobody') });
    expect(last.status).toBe(429);
    expect((await last.json()).message).toMatch(/Too many reset requests/);
    // 5 requests for one address: 3 mails queued at most in the hour
    const jobs = await db.execute(sql`select 1 from ${sql.identifier(process.env.JOB_QUEUE_SCHEMA || 'pgboss')}.job where name = 'password-reset-mail' and data->>'email' = ${email}`);
    expect(jobs.rows.length).toBe(3);
    await waitForMail(email, 'Reset', 60_000);
  });

  it('keeps the limiter table bounded: one row per key, with an expiry', async () => {
    const [r] = await db.select({ n: sql<number>`count(*)::int`, noExpiry: sql<number>`count(*) filter (where ${rateLimits.expire} is null)::int` }).from(rateLimits);
    expect(r.n).toBeGreaterThan(0);
    expect(r.noExpiry).toBe(0);
  });
});

describe('sessions end on the server', () => {
  const cookieOf = (c: AppClient) => c.cookieHeader();
  const meWith = (cookie: string) => fetch(`${APP_URL}/api/me`, { headers: { cookie }, redirect: 'manual' });

  it('signing out ends a copied session cookie too', async () => {
    const email = await person('biologist', 'sign-out-pass-1');
    const c = await signInWith(email, 'sign-out-pass-1');
    const stolen = cookieOf(c);
    expect((await meWith(stolen)).status).toBe(200);
    const { csrfToken } = await (await c.fetch('/api/auth/csrf')).json();
    await c.fetch('/api/auth/signout', {
      method: 'POST',
      headers: { 'content-type': 'application/x-www-form-urlencoded', 'x-auth-return-redirect': '1' },
      body: new URLSearchParams({ csrfToken, callbackUrl: '/signin' }),
    });
    expect((await meWith(stolen)).status).toBe(401);
    // Auth.js's own session route agrees
    const s = await fetch(`${APP_URL}/api/auth/session`, { headers: { cookie: stolen } });
    expect(await s.json()).toBeNull();
    // signing in again works
    expect((await (await signInWith(email, 'sign-out-pass-1')).fetch('/api/me')).status).toBe(200);
  });

  it('a password reset ends every existing session and voids every older link', async () => {
    const email = await person('analyst', 'before-reset-1');
    const c = await signInWith(email, 'before-reset-1');
    const cookie = cookieOf(c);
    expect((await new AppClient().json('/api/password-reset', 'POST', { email })).status).toBe(202);
    const [firstToken] = await resetTokens(email, 1);
    expect((await new AppClient().json('/api/password-reset', 'POST', { email })).status).toBe(202);
    const secondToken = (await resetTokens(email, 2)).find((t) => t !== firstToken)!;
    const first = { token: firstToken };
    const second = { token: secondToken };
    expect(second.token).not.toBe(first.token);
    // the older link stopped working when the newer one was sent
    const old = await new AppClient().json('/api/invitations/accept', 'POST', { token: first.token, password: 'from-old-link-2' });
    expect(old.status).toBe(400);
    expect((await new AppClient().json('/api/invitations/accept', 'POST', { token: second.token, password: 'after-reset-3' })).status).toBe(200);
    expect((await meWith(cookie)).status).toBe(401);
    expect(await new AppClient().signIn(email, 'after-reset-3')).toBeNull();
  });

  it('a role change or a deactivation ends the person\'s sessions at once', async () => {
    const email = await person('biologist', 'role-change-pw-4');
    const [u] = await db.select({ id: users.id }).from(users).where(eq(users.email, email));
    const c1 = await signInWith(email, 'role-change-pw-4');
    expect((await admin.json(`/api/admin/users/${u.id}`, 'PATCH', { role: 'collaborator' })).status).toBe(200);
    expect((await meWith(cookieOf(c1))).status).toBe(401);
    const c2 = await signInWith(email, 'role-change-pw-4');
    expect((await (await c2.fetch('/api/me')).json()).user.role).toBe('collaborator');
    expect((await admin.json(`/api/admin/users/${u.id}`, 'PATCH', { active: false })).status).toBe(200);
    expect((await meWith(cookieOf(c2))).status).toBe(401);
  });
});

describe('redirects and unknown accounts', () => {
  it('sends a signed-in person only to paths of the app itself after sign-in', async ({ signedIn }) => {
    const bio = await signedIn('biologist');
    for (const next of ['/\\evil.test', '//evil.test', 'https://evil.test/x', '/\\/evil.test', 'javascript:alert(1)']) {
      const res = await bio.fetch(`/signin?next=${encodeURIComponent(next)}`);
      expect(res.status, next).toBe(302);
      expect(res.headers.get('location'), next).toBe('/');
    }
    const ok = await bio.fetch(`/signin?next=${encodeURIComponent('/studies?x=1')}`);
    expect(ok.headers.get('location')).toBe('/studies?x=1');
  });

  it('answers a reset request the same way for unknown and known accounts, the lookup and mail happening in the job queue', async () => {
    const known = await person('collaborator', 'known-person-5');
    const unknown = unique('nobody');
    const a = await new AppClient().json('/api/password-reset', 'POST', { email: known });
    const b = await new AppClient().json('/api/password-reset', 'POST', { email: unknown });
    expect(a.status).toBe(202);
    expect(b.status).toBe(202);
    expect(await a.json()).toEqual(await b.json());
    // both requests became a queued job: the reply did no account-dependent work
    const schema = process.env.JOB_QUEUE_SCHEMA || 'pgboss';
    const jobs = await db.execute(sql`select data from ${sql.identifier(schema)}.job where name = 'password-reset-mail' and (data->>'email' = ${known} or data->>'email' = ${unknown})`);
    expect(jobs.rows.length).toBe(2);
    await waitForMail(known, 'Reset', 60_000);
  });
});
