import type { APIContext } from 'astro';

/** The caller's address for audit and rate limits. */
export function clientAddress(ctx: APIContext): string {
  try {
    return ctx.clientAddress;
  } catch {
    return 'unknown';
  }
}
