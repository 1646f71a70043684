/**
 * Sessions end 12 h after the last request, not after sign-in: the middleware renews a session cookie that is
 * more than an hour old. The old cookie is made here with Auth.js's own encode and a short life, which is how
 * an hour-old cookie looks (less than its full life left).
 */
import { describe, expect } from 'vitest';
import { encode, decode } from '@auth/core/jwt';
import { eq } from 'drizzle-orm';
import { APP_URL } from '../support/client';
import { DEMO } from '../support/demo';
import type { Db } from '../../src/lib/db/client';
import { users } from '../../src/lib/db/schema';
import { SESSION_MAX_AGE_S } from '../../src/lib/auth/session';
import { test, it } from '../support/fixtures';

const NAME = 'authjs.session-token';
const secret = process.env.AUTH_SECRET!;
let db: Db;
let analyst: { id: string; email: string; name: string };

const sessionCookie = (res: Response) => res.headers.getSetCookie().find((c) => c.startsWith(`${NAME}=`));
const valueOf = (setCookie: string) => setCookie.split(';')[0].slice(NAME.length + 1);
const me = (token: string, path = '/api/me') => fetch(APP_URL + path, { headers: { cookie: `${NAME}=${token}` }, redirect: 'manual' });

test.beforeAll(async ({ db: fileDb }) => {
  db = fileDb;
  [analyst] = await db.select({ id: users.id, email: users.email, name: users.name }).from(users).where(eq(users.email, DEMO.analyst));
});

describe('session renewal', () => {
  const claims = () => ({ uid: analyst.id, sub: analyst.id, email: analyst.email, name: analyst.name });

  it('renews a session cookie with less than its full life left, for the full life, with the same user', async () => {
    const old = await encode({ token: claims(), secret, salt: NAME, maxAge: 600 }); // 10 min left: issued long ago
    const res = await me(old);
    expect(res.status).toBe(200);
    expect((await res.json()).user.email).toBe(DEMO.analyst);
    const set = sessionCookie(res);
    expect(set).toBeDefined();
    expect(set).toMatch(/; Path=\/; Max-Age=43200; HttpOnly; SameSite=Lax$/);
    const renewed = await decode({ token: valueOf(set!), secret, salt: NAME });
    expect(renewed!.uid).toBe(analyst.id);
    expect(renewed!.email).toBe(analyst.email);
    const now = Date.now() / 1000;
    expect(renewed!.exp! - now).toBeGreaterThan(SESSION_MAX_AGE_S - 60);
    expect(renewed!.exp! - now).toBeLessThanOrEqual(SESSION_MAX_AGE_S + 1);
    // and the renewed cookie is accepted
    const again = await me(valueOf(set!));
    expect(again.status).toBe(200);
    expect(sessionCookie(again)).toBeUndefined();
  });

  it('leaves a fresh session cookie alone, and never touches the cookie on Auth.js routes', async ({ signedIn }) => {
    const c = await signedIn('analyst', { fresh: true });
    const res = await c.fetch('/api/me');
    expect(res.status).toBe(200);
    expect(sessionCookie(res)).toBeUndefined();
    const old = await encode({ token: claims(), secret, salt: NAME, maxAge: 600 });
    const session = await me(old, '/api/auth/session');
    expect(session.status).toBe(200);
    // Auth.js's own session route may set the cookie itself, but the middleware adds no second one
    expect(session.headers.getSetCookie().filter((x) => x.startsWith(`${NAME}=`)).length).toBeLessThanOrEqual(1);
  });

  it('does not renew an expired cookie', async () => {
    const expired = await encode({ token: claims(), secret, salt: NAME, maxAge: -120 }); // past Auth.js's 15 s clock tolerance
    const res = await me(expired);
    expect(res.status).toBe(401);
    expect(sessionCookie(res)).toBeUndefined();
  });
});
