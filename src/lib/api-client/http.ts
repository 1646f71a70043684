/** Typed fetch for islands: parses replies with the shared schemas and turns error bodies into ApiError. */
import type { z } from 'zod';

export class ApiError extends Error {
  constructor(readonly status: number, readonly code: string, message: string) {
    super(message);
  }
}

export async function api<S extends z.ZodType>(path: string, schema: S | null, init: RequestInit & { json?: unknown } = {}): Promise<z.infer<S>> {
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
    const body = (data ?? {}) as { error?: string; message?: string };
    throw new ApiError(res.status, body.error ?? 'http_error', body.message ?? `The server answered ${res.status}.`);
  }
  return schema ? schema.parse(data) : (data as z.infer<S>);
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
