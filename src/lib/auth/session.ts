/**
 * The server-side guard used by every page and API route. The session cookie only carries the
 * user id; role, active flag and study roles come from the database, through a per-process memory
 * that forgets a row as soon as it changes (accessCache.ts), so a change by an admin takes effect at once.
 */
import { eq, and } from 'drizzle-orm';
import { encode, getToken } from '@auth/core/jwt';
import type { Db } from '../db/client';
import { users, studyMembers, studies } from '../db/schema';
import { HttpError, unauthorized, forbidden } from '../http/errors';
import { canInStudy, type Action, type MemberRole, type Role, type SessionUser } from './permissions';
import { AccessCache } from './accessCache';
import { authSecret, config } from '../config';

const g = globalThis as unknown as { __heightlightDb?: Db; __heightlightAccess?: AccessCache };

/**
 * The access memory of this web process ({@link AccessCache}), only for the app's own database handle
 * (tests and scripts that build their own handle read the database every time). Off with HEIGHTLIGHT_ACCESS_CACHE=off.
 */
export function appAccessCache(db: Db): AccessCache | null {
  if (db !== g.__heightlightDb || config().HEIGHTLIGHT_ACCESS_CACHE === 'off') return null;
  if (!g.__heightlightAccess) {
    const url = (db.$client.options as { connectionString?: string }).connectionString;
    if (!url) return null;
    g.__heightlightAccess = new AccessCache(url);
    g.__heightlightAccess.start();
  }
  return g.__heightlightAccess;
}

/** Makes this web process forget what it remembers of a person (their row changed: role, active flag, session version). */
export function forgetUserAccess(userId: string): void {
  g.__heightlightAccess?.forget({ userId });
}

/** A session lasts this long after the last request that renewed it (s). */
export const SESSION_MAX_AGE_S = 12 * 60 * 60;
/** A session cookie is renewed once it is this old (ms), so an active user stays signed in. */
const RENEW_AFTER_MS = 60 * 60 * 1000;

const SECURE_SESSION_COOKIE = '__Secure-authjs.session-token';

/** Whether the request carries Auth.js's secure-named session cookie (it is, behind TLS; the proxy may speak http to us). */
const usesSecureCookie = (request: Request) => (request.headers.get('cookie') ?? '').includes(SECURE_SESSION_COOKIE);

/** The session token's claims as Auth.js's own getToken reads them, or null. */
const readToken = (request: Request) =>
  getToken({ req: request, secret: authSecret(), secureCookie: usesSecureCookie(request) }).catch(() => null);

/**
 * Reads the session cookie and loads the active user it names, with when the cookie runs out, or null. The
 * encrypted session token is decoded directly (Auth.js's own getToken) rather than through a full internal
 * session request, which halves the cost of every signed-in request; {@link renewedSessionCookie} then does
 * what that request would have done: keep an active session alive.
 */
export async function loadSession(db: Db, request: Request): Promise<{ user: SessionUser; expiresAtMs: number } | null> {
  const cookie = request.headers.get('cookie') ?? '';
  if (!cookie.includes('session-token')) return null;
  const decode = async () => {
    const token = await readToken(request);
    if (typeof token?.uid !== 'string') return null;
    // a cookie from before session versions existed counts as version 0
    const sv = typeof token.sv === 'number' ? token.sv : 0;
    return { uid: token.uid, sv, expiresAtMs: typeof token.exp === 'number' ? token.exp * 1000 : Date.now() + 60_000 };
  };
  const loadUser = async (id: string) => {
    const [row] = await db
      .select({ id: users.id, email: users.email, name: users.name, role: users.role, active: users.active, sessionVersion: users.sessionVersion })
      .from(users)
      .where(eq(users.id, id));
    return row ?? null;
  };
  const cache = appAccessCache(db);
  const token = cache ? await cache.token(cookie, decode) : await decode();
  const id = token?.uid;
  if (!id) return null;
  const row = cache ? await cache.user(id, () => loadUser(id)) : await loadUser(id);
  if (!row || !row.active) return null;
  // sign-out, a password change, a role change or deactivation raised the version: this session has ended
  if ((token.sv ?? 0) !== (row.sessionVersion ?? 0)) return null;
  return { user: { id: row.id, email: row.email, name: row.name, role: row.role }, expiresAtMs: token.expiresAtMs };
}

/**
 * A Set-Cookie value that renews the session for another {@link SESSION_MAX_AGE_S}, when the cookie presented
 * was issued more than an hour ago (it then has less than its full life left); null otherwise. So a session
 * ends 12 h after the last request, not 12 h after sign-in. The new token carries the same claims, made by
 * Auth.js's own encode with the cookie's name and attributes as Auth.js sets them.
 *
 * @param request - a request whose session was accepted by {@link loadSession}
 * @param expiresAtMs - when that session runs out (ms since epoch)
 */
export async function renewedSessionCookie(request: Request, expiresAtMs: number): Promise<string | null> {
  if (expiresAtMs - Date.now() > SESSION_MAX_AGE_S * 1000 - RENEW_AFTER_MS) return null;
  const secureCookie = usesSecureCookie(request);
  const name = secureCookie ? SECURE_SESSION_COOKIE : 'authjs.session-token';
  const token = await readToken(request);
  if (!token) return null;
  const { iat: _iat, exp: _exp, jti: _jti, ...claims } = token;
  const value = await encode({ token: claims, secret: authSecret(), salt: name, maxAge: SESSION_MAX_AGE_S });
  return `${name}=${value}; Path=/; Max-Age=${SESSION_MAX_AGE_S}; HttpOnly; SameSite=Lax${secureCookie ? '; Secure' : ''}`;
}

/** The signed-in user, or 401. */
export function requireUser(locals: App.Locals): SessionUser {
  if (!locals.user) throw unauthorized();
  return locals.user;
}

/** The signed-in user with one of `roles`, or 401/403. */
export function requireRole(locals: App.Locals, roles: Role[], what = 'do this'): SessionUser {
  const user = requireUser(locals);
  if (!roles.includes(user.role)) throw forbidden(what);
  return user;
}

/**
 * The signed-in user allowed to do `action` in study `studyId`: 401 anonymous, 404 no such study,
 * 403 not a member or not allowed. Returns the user and their study role (null for an admin who is not a member).
 */
export async function requireStudyAction(
  db: Db,
  locals: App.Locals,
  studyId: string,
  action: Action,
  what = 'do this in this study',
): Promise<{ user: SessionUser; membership: MemberRole | null }> {
  const user = requireUser(locals);
  const load = async () => {
    const [r] = await db
      .select({ id: studies.id, role: studyMembers.role })
      .from(studies)
      .leftJoin(studyMembers, and(eq(studyMembers.studyId, studies.id), eq(studyMembers.userId, user.id)))
      .where(eq(studies.id, studyId));
    return r ? { role: r.role } : null;
  };
  const cache = appAccessCache(db);
  const row = cache ? await cache.membership(studyId, user.id, load) : await load();
  if (!row) throw new HttpError(404, 'not_found', 'That study does not exist.');
  const membership = (row.role ?? null) as MemberRole | null;
  if (!canInStudy(user, membership, action)) throw forbidden(what);
  return { user, membership };
}
