import { randomUUID } from 'node:crypto';
import type { APIContext } from 'astro';
import { HttpError } from './errors';
import { AnalysisError } from '../analysis/errors';

/** The one error body of the API: `{ error, message, issues?, requestId? }`. */
export function problem(status: number, error: string, message: string, extra: Record<string, unknown> = {}) {
  return Response.json({ error, message, ...extra }, { status, headers: { 'cache-control': 'no-store' } });
}

const NETWORK_CODES = new Set(['ECONNREFUSED', 'ECONNRESET', 'ETIMEDOUT', 'EPIPE', 'EHOSTUNREACH', 'ENOTFOUND', 'EAI_AGAIN']);

/**
 * True for an object store that cannot be reached (refused, reset, timed out). The AWS SDK marks every
 * error it throws with `$metadata`, which tells these apart from the same socket codes coming from pg.
 */
export function isStorageConnectionError(err: unknown) {
  if (!err || typeof err !== 'object' || !('$metadata' in err)) return false;
  const { code, name } = err as { code?: string; name?: string };
  return (code !== undefined && NETWORK_CODES.has(code)) || name === 'TimeoutError' || name === 'RequestTimeout';
}

function isPgConnectionError(err: unknown) {
  const code = (err as { code?: string })?.code;
  return (
    code === 'ECONNREFUSED' || code === 'ECONNRESET' || code === '57P01' || code === '57P03' ||
    (err instanceof Error && /Connection terminated|timeout exceeded when trying to connect/.test(err.message))
  );
}

/**
 * Wraps a route handler: HttpError → its status, AnalysisError → 422, a database or object-store outage → 503,
 * anything else → 500 with a request id. Details are logged on the server, never sent.
 */
export function handle(fn: (ctx: APIContext) => Promise<Response> | Response) {
  return async (ctx: APIContext): Promise<Response> => {
    try {
      return await fn(ctx);
    } catch (err) {
      if (err instanceof HttpError) {
        return problem(err.status, err.code, err.message, err.issues ? { issues: err.issues } : {});
      }
      if (err instanceof AnalysisError) {
        return problem(422, err.code, err.message, err.details ? { details: err.details } : {});
      }
      const requestId = randomUUID();
      console.error(`[api] ${ctx.request.method} ${new URL(ctx.request.url).pathname} failed (request ${requestId}):`, err);
      if (isStorageConnectionError(err)) {
        return problem(503, 'storage_unavailable', 'The file store is not reachable right now; nothing was saved. Try again in a moment.', { requestId });
      }
      if (isPgConnectionError(err)) {
        return problem(503, 'service_unavailable', 'The database is not reachable right now. Nothing was changed; try again in a moment.', { requestId });
      }
      return problem(500, 'internal_error', 'Something went wrong on the server. Nothing was changed; quote this request id if it happens again.', { requestId });
    }
  };
}
