/** Typed fetch for islands: parses replies with the shared schemas and turns error bodies into ApiError. */
import type { z } from 'zod';
import { ErrorReply } from '../schemas/replies';

export class ApiError extends Error {
  constructor(readonly status: number, readonly code: string, message: string) {
    super(message);
    this.name = 'ApiError';
  }
}

/** What an island shows for a failed call: the server's message, or a plain one when the server was not reached. */
export function errorText(e: unknown, unreachable = 'The server could not be reached; nothing was changed. Try again.'): string {
  if (e instanceof ApiError) return e.message;
  return unreachable;
}

export type ApiInit = Omit<RequestInit, 'body'> & { json?: unknown; body?: BodyInit };

/** One call: the reply must parse with `schema` (a route whose body is not read passes `AnyReply`). */
export async function api<S extends z.ZodType>(path: string, schema: S, init: ApiInit = {}): Promise<z.infer<S>> {
  const { json, ...rest } = init;
  const res = await fetch(path, {
    ...rest,
    headers: { ...(json !== undefined ? { 'content-type': 'application/json' } : {}), ...(rest.headers ?? {}) },
    body: json !== undefined ? JSON.stringify(json) : rest.body,
  });
  const text = await res.text();
  let data: unknown = null;
  try {
    data = text ? JSON.parse(text) : null;
  } catch {
    /* not JSON */
  }
  if (!res.ok) {
    const parsed = ErrorReply.safeParse(data);
    const body = parsed.success ? parsed.data : {};
    throw new ApiError(res.status, body.error ?? 'http_error', body.message ?? `The server answered ${res.status}.`);
  }
  const parsed = schema.safeParse(data);
  if (!parsed.success) {
    throw new ApiError(res.status, 'bad_reply', `The server's reply to ${path.split('?')[0]} was not in the expected form; reload the page.`);
  }
  return parsed.data;
}

/** A binary reply: checks the status and the content type before handing over the bytes. */
export async function apiBytes(path: string, contentType: string, init: Omit<RequestInit, 'body'> = {}): Promise<ArrayBuffer> {
  const res = await fetch(path, init);
  if (!res.ok) {
    const parsed = ErrorReply.safeParse(await res.json().catch(() => null));
    const body = parsed.success ? parsed.data : {};
    throw new ApiError(res.status, body.error ?? 'http_error', body.message ?? `The server answered ${res.status}.`);
  }
  const got = (res.headers.get('content-type') ?? '').split(';')[0].trim().toLowerCase();
  if (got !== contentType) throw new ApiError(res.status, 'bad_reply', `The server sent ${got || 'an unnamed type'} where ${contentType} was expected; reload the page.`);
  return res.arrayBuffer();
}

/** PUTs a file to a presigned URL with progress (fetch has no upload progress, so XMLHttpRequest). */
export function putWithProgress(url: string, file: Blob, onProgress: (fraction: number) => void, signal?: AbortSignal): Promise<void> {
  return new Promise((resolve, reject) => {
    const xhr = new XMLHttpRequest();
    xhr.open('PUT', url);
    xhr.setRequestHeader('content-type', 'image/tiff');
    xhr.upload.onprogress = (e) => e.lengthComputable && onProgress(e.loaded / e.total);
    xhr.onload = () => (xhr.status < 300 ? resolve() : reject(new ApiError(xhr.status, 'storage_error', `The storage answered ${xhr.status}. Retry the file.`)));
    xhr.onerror = () => reject(new ApiError(0, 'network_error', 'The upload was interrupted (network or storage unavailable). Retry the file.'));
    signal?.addEventListener('abort', () => xhr.abort());
    xhr.send(file);
  });
}
