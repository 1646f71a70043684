import { z } from 'zod';
import { HttpError } from './errors';

const MAX_JSON_BYTES = 1024 * 1024;
/** Deepest nesting of arrays and objects accepted; the app's own bodies nest 4 levels at most. */
export const MAX_JSON_DEPTH = 32;

function fail(error: z.ZodError, where: string): never {
  const flat = z.flattenError(error);
  const first = error.issues[0];
  const path = first?.path.join('.') || where;
  throw new HttpError(400, 'validation_failed', `Check ${path}: ${first?.message ?? 'invalid value'}.`, flat);
}

const tooLarge = () => new HttpError(413, 'too_large', 'The request body is larger than 1 MB.');

/**
 * Reads a body as text, stopping as soon as it passes `maxBytes` (a declared Content-Length over the limit is
 * refused before reading), so an oversized body is never held whole in memory.
 */
export async function readBodyText(request: Request, maxBytes = MAX_JSON_BYTES): Promise<string> {
  const declared = Number(request.headers.get('content-length'));
  if (Number.isFinite(declared) && declared > maxBytes) throw tooLarge();
  if (!request.body) return '';
  const reader = request.body.getReader();
  const chunks: Uint8Array[] = [];
  let total = 0;
  for (;;) {
    const { done, value } = await reader.read();
    if (done) break;
    total += value.byteLength;
    if (total > maxBytes) {
      await reader.cancel().catch(() => undefined);
      throw tooLarge();
    }
    chunks.push(value);
  }
  return new TextDecoder().decode(Buffer.concat(chunks));
}

/**
 * The deepest nesting of arrays and objects in JSON text, counted without parsing (brackets inside strings
 * are skipped), so a body nested 100,000 levels deep is refused before JSON.parse or zod walk it.
 * Stops counting once `limit` is passed.
 */
export function jsonDepth(text: string, limit = Infinity): number {
  let depth = 0;
  let max = 0;
  let inString = false;
  for (let i = 0; i < text.length; i++) {
    const c = text.charCodeAt(i);
    if (inString) {
      if (c === 92) i++; // backslash: skip the escaped character
      else if (c === 34) inString = false;
    } else if (c === 34) inString = true;
    else if (c === 123 || c === 91) {
      if (++depth > max) max = depth;
      if (max > limit) return max;
    } else if (c === 125 || c === 93) depth--;
  }
  return max;
}

/** Parses and validates a JSON body; malformed JSON, wrong types, deep nesting or oversized bodies get 400/413. */
export async function parseJson<S extends z.ZodType>(request: Request, schema: S): Promise<z.infer<S>> {
  const type = request.headers.get('content-type') ?? '';
  if (!type.includes('application/json')) {
    throw new HttpError(415, 'unsupported_media_type', 'Send the request body as JSON (Content-Type: application/json).');
  }
  const text = await readBodyText(request);
  if (jsonDepth(text, MAX_JSON_DEPTH) > MAX_JSON_DEPTH) {
    throw new HttpError(400, 'too_deep', `The request body nests deeper than ${MAX_JSON_DEPTH} levels.`);
  }
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
