import { z } from 'zod';
import { HttpError } from './errors';

const MAX_JSON_BYTES = 1024 * 1024;

function fail(error: z.ZodError, where: string): never {
  const flat = z.flattenError(error);
  const first = error.issues[0];
  const path = first?.path.join('.') || where;
  throw new HttpError(400, 'validation_failed', `Check ${path}: ${first?.message ?? 'invalid value'}.`, flat);
}

/** Parses and validates a JSON body; malformed JSON, wrong types or oversized bodies get 400/413. */
export async function parseJson<S extends z.ZodType>(request: Request, schema: S): Promise<z.infer<S>> {
  const type = request.headers.get('content-type') ?? '';
  if (!type.includes('application/json')) {
    throw new HttpError(415, 'unsupported_media_type', 'Send the request body as JSON (Content-Type: application/json).');
  }
  const text = await request.text();
  if (text.length > MAX_JSON_BYTES) throw new HttpError(413, 'too_large', 'The request body is larger than 1 MB.');
  let data: unknown;
  try {
    data = JSON.parse(text);
  } catch {
    throw new HttpError(400, 'malformed_json', 'The request body is not valid JSON.');
  }
  const parsed = schema.safeParse(data);
  if (!parsed.success) fail(parsed.error, 'body');
  return parsed.data;
}

/** Validates route parameters (ids in the path). */
export function parseParams<S extends z.ZodType>(params: Record<string, string | undefined>, schema: S): z.infer<S> {
  const parsed = schema.safeParse(params);
  if (!parsed.success) {
    throw new HttpError(404, 'not_found', 'No such item: the address is not valid.');
  }
  return parsed.data;
}

/** Validates the query string. */
export function parseQuery<S extends z.ZodType>(url: URL, schema: S): z.infer<S> {
  const parsed = schema.safeParse(Object.fromEntries(url.searchParams));
  if (!parsed.success) fail(parsed.error, 'query');
  return parsed.data;
}

export const IdParam = z.object({ id: z.uuid() });
