import { randomUUID } from 'node:crypto';
import type { APIContext } from 'astro';
import { HttpError } from './errors';
import { AnalysisError } from '../analysis/errors';

/** The one error body of the API: `{ error, message, issues?, requestId? }`. */
export function problem(status: number, error: string, message: string, extra: Record<string, unknown> = {}) {
  return Response.json({ error, message, ...extra }, { status, headers: { 'cache-control': 'no-store' } });
}

function isPgConnectionError(err: unknown) {
  const code = (err as { code?: string })?.code;
  return (
    code === 'ECONNREFUSED' || code === 'ECONNRESET' || code === '57P01' || code === '57P03' ||
    (err instanceof Error && /Connection terminated|timeout exceeded when trying to connect/.test(err.message))
  );
}

/**
 * Wraps a route handler: HttpError → its status, AnalysisError → 422, a database outage → 503,
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
      if (isPgConnectionError(err)) {
        return problem(503, 'service_unavailable', 'The database is not reachable right now. Nothing was changed; try again in a moment.', { requestId });
      }
      return problem(500, 'internal_error', 'Something went wrong on the server. Nothing was changed; quote this request id if it happens again.', { requestId });
    }
  };
}
