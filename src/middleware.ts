/**
 * Every request: refuse state-changing requests from other origins, load the signed-in user into locals, guard
 * private pages (anonymous → sign-in page), and add security headers (CSP, no caching of private replies).
 * API routes do their own role checks and answer 401/403 as JSON. The client address comes from the socket
 * or a configured trusted proxy only (lib/http/peerAddress.ts).
 */
import { defineMiddleware } from 'astro:middleware';
import { getDb } from './lib/db/client';
import { loadSession, renewedSessionCookie } from './lib/auth/session';
import { requestContext } from './lib/http/requestContext';
import { installPeerAddressGuard, requestClientAddress } from './lib/http/peerAddress';
import { isSameOriginRequest } from './lib/http/sameOrigin';
import { contentSecurityPolicy, inlineScriptSources } from './lib/http/contentSecurityPolicy';
import { config } from './lib/config';

installPeerAddressGuard(config().TRUSTED_PROXIES);

const PUBLIC_PAGES = ['/signin', '/invite/', '/reset', '/favicon.svg', '/_astro/', '/api/auth/', '/api/invitations/', '/api/password-reset'];

const isPublic = (path: string) => PUBLIC_PAGES.some((p) => path === p || path.startsWith(p));

/** An HTML page's policy names the hashes of the inline scripts it carries (the page is read whole for that). */
async function withPageScriptHashes(res: Response): Promise<Response> {
  if (!(res.headers.get('content-type') ?? '').includes('text/html') || !res.body) return res;
  const html = await res.text();
  const out = new Response(html, { status: res.status, statusText: res.statusText, headers: res.headers });
  out.headers.set('Content-Security-Policy', contentSecurityPolicy(config().S3_PUBLIC_ENDPOINT ?? config().S3_ENDPOINT, inlineScriptSources(html)));
  out.headers.delete('content-length');
  return out;
}

/** Replies that may be cached: the hashed build assets and the icon; everything else is private to its user. */
const isCacheable = (path: string) => path.startsWith('/_astro/') || path === '/favicon.svg';

function securityHeaders(original: Response, path = '') {
  let res = original;
  try {
    res.headers.set('X-Content-Type-Options', 'nosniff');
  } catch {
    // Some responses (redirects) have immutable headers: copy them.
    res = new Response(original.body, original);
  }
  const h = res.headers;
  h.set('X-Content-Type-Options', 'nosniff');
  h.set('Referrer-Policy', 'same-origin');
  h.set('X-Frame-Options', 'DENY');
  if (!isCacheable(path) && !h.has('cache-control')) h.set('Cache-Control', 'private, no-store');
  h.set('Content-Security-Policy', contentSecurityPolicy(config().S3_PUBLIC_ENDPOINT ?? config().S3_ENDPOINT));
  return res;
}

export const onRequest = defineMiddleware(async (ctx, next) => {
  const path = ctx.url.pathname;
  ctx.locals.user = null;
  if (!isSameOriginRequest(ctx.request, [ctx.url.origin, new URL(config().PUBLIC_URL).origin])) {
    return securityHeaders(Response.json(
      { error: 'cross_origin', message: 'This request came from another site and was refused. Use Heightlight from its own address.' },
      { status: 403 },
    ), path);
  }
  let expiresAtMs: number | null = null;
  if (!path.startsWith('/_astro/')) {
    try {
      const session = await loadSession(await getDb(), ctx.request);
      ctx.locals.user = session?.user ?? null;
      expiresAtMs = session?.expiresAtMs ?? null;
    } catch (err) {
      console.error('[middleware] session lookup failed:', (err as Error).message);
      if (path.startsWith('/api/')) {
        return securityHeaders(Response.json(
          { error: 'service_unavailable', message: 'The database is not reachable right now. Try again in a moment.' },
          { status: 503 },
        ), path);
      }
    }
  }
  if (!ctx.locals.user && !isPublic(path) && !path.startsWith('/api/')) {
    const back = encodeURIComponent(path + ctx.url.search);
    return securityHeaders(ctx.redirect(`/signin?next=${back}`, 302), path);
  }
  let astroAddress: string | undefined;
  try {
    astroAddress = ctx.clientAddress;
  } catch {
    /* not available for prerendered routes */
  }
  const ip = requestClientAddress(ctx.request, astroAddress);
  const res = await withPageScriptHashes(securityHeaders(await requestContext.run({ ip }, () => next()), path));
  // Auth.js's own routes set or clear the session cookie themselves (sign-out must not be undone)
  if (expiresAtMs !== null && !path.startsWith('/api/auth/')) {
    const renewed = await renewedSessionCookie(ctx.request, expiresAtMs);
    if (renewed) res.headers.append('set-cookie', renewed);
  }
  return res;
});
