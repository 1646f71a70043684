/**
 * The client's address for rate limits and the audit log, from the socket unless the socket's peer is a
 * configured trusted proxy (TRUSTED_PROXIES, none by default).
 *
 * Why own code: Astro's Node adapter (astro 5, standalone mode) sets `clientAddress` from the first
 * X-Forwarded-For value whenever a request carries one, and keeps no reference to the socket. So the web
 * server's 'request' event is wrapped once per process: before Astro reads the request, X-Forwarded-For is
 * replaced by the address worked out here (the peer, or the nearest untrusted hop a trusted proxy reports)
 * and a per-process mark says this was done. A request without the mark (one that arrived while this module
 * was still loading) and carrying X-Forwarded-For gets the address 'unknown'.
 */
import http from 'node:http';
import { EventEmitter } from 'node:events';
import { randomBytes } from 'node:crypto';

const MARK_HEADER = 'x-heightlight-peer-checked';
const g = globalThis as unknown as { __heightlightPeerMark?: string };

/**
 * The client address a request came from, given the socket's peer and what X-Forwarded-For says.
 * Walks the forwarded chain from the right while each hop is a trusted proxy (pure; exported for tests).
 *
 * @param peer - the socket's remote address
 * @param forwardedFor - the X-Forwarded-For header, if any
 * @param trusted - trusted proxy addresses
 */
export function resolveClientAddress(peer: string, forwardedFor: string | undefined, trusted: readonly string[]): string {
  const norm = (a: string) => a.trim().replace(/^::ffff:/, '');
  let client = norm(peer);
  if (!trusted.length || !forwardedFor) return client;
  const trustedSet = new Set(trusted.map(norm));
  const hops = forwardedFor.split(',').map(norm).filter(Boolean);
  while (trustedSet.has(client) && hops.length) client = hops.pop()!;
  return client;
}

/**
 * Installs the request wrapper (once per process).
 *
 * @param trusted - trusted proxy addresses (from the configuration)
 */
export function installPeerAddressGuard(trusted: readonly string[]): void {
  if (g.__heightlightPeerMark) return;
  const mark = randomBytes(16).toString('hex');
  g.__heightlightPeerMark = mark;
  const emit = EventEmitter.prototype.emit;
  Object.defineProperty(http.Server.prototype, 'emit', {
    configurable: true,
    writable: true,
    value: function (this: http.Server, event: string | symbol, ...args: unknown[]) {
      if (event === 'request') {
        const req = args[0] as http.IncomingMessage;
        const raw = req.headers['x-forwarded-for'];
        const client = resolveClientAddress(req.socket?.remoteAddress ?? 'unknown', Array.isArray(raw) ? raw.join(',') : raw, trusted);
        req.headers['x-forwarded-for'] = client;
        req.headers[MARK_HEADER] = mark;
      }
      return emit.call(this, event, ...args);
    },
  });
}

/**
 * The address of this request as the middleware should record it.
 *
 * @param request - the request
 * @param astroAddress - Astro's `clientAddress` (first X-Forwarded-For value, else the peer)
 */
export function requestClientAddress(request: Request, astroAddress: string | undefined): string {
  const marked = !!g.__heightlightPeerMark && request.headers.get(MARK_HEADER) === g.__heightlightPeerMark;
  if (marked) return astroAddress ?? 'unknown';
  return request.headers.has('x-forwarded-for') ? 'unknown' : (astroAddress ?? 'unknown');
}
