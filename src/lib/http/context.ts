import type { APIContext } from 'astro';
import { currentIp } from './requestContext';

/**
 * The caller's address for audit and rate limits, as the middleware worked it out (the socket's peer, or what a
 * configured trusted proxy reports: lib/http/peerAddress.ts). Never read from a request header here.
 */
export function clientAddress(_ctx: APIContext): string {
  return currentIp();
}
