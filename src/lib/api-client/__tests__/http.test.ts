// The island-side client against a real HTTP server on 127.0.0.1 (no fetch stand-in): replies parsed with the
// route schemas, the server's { error, message } surfaced as ApiError, and a call aborted by its signal.
import { createServer, type Server } from 'node:http';
import type { AddressInfo } from 'node:net';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { api, apiBytes, ApiError, errorText } from '../http';
import { AnyReply, FieldStatusReply, RelinkReply } from '../../schemas/replies';

let server: Server;
let base = '';

beforeAll(async () => {
  server = createServer((req, res) => {
    const send = (status: number, body: string | Buffer, type = 'application/json') => { res.writeHead(status, { 'content-type': type }); res.end(body); };
    if (req.url === '/status') return send(200, JSON.stringify({ field: { status: 'ingesting', failureReason: null, progress: { stage: 'tiles', fraction: 0.25 }, name: 'F1' } }));
    if (req.url === '/conflict') return send(409, JSON.stringify({ error: 'stale_version', message: 'Someone else changed this field; reload the page.' }));
    if (req.url === '/crash') return send(502, '<html>Bad gateway</html>', 'text/html');
    if (req.url === '/wrong-shape') return send(200, JSON.stringify({ queued: 'all' }));
    if (req.url === '/echo') {
      let body = '';
      req.on('data', (c) => { body += c; });
      req.on('end', () => send(200, JSON.stringify({ queued: JSON.parse(body).fieldIds, method: req.method, type: req.headers['content-type'] })));
      return;
    }
    if (req.url === '/values.f32') return send(200, Buffer.from(new Float32Array([1.5, -2.25]).buffer), 'application/octet-stream');
    if (req.url === '/slow') return; // never answers: only the signal ends the call
    send(404, JSON.stringify({ error: 'not_found', message: 'No such thing.' }));
  });
  await new Promise<void>((r) => server.listen(0, '127.0.0.1', r));
  base = `http://127.0.0.1:${(server.address() as AddressInfo).port}`;
});
afterAll(() => { server.closeAllConnections(); server.close(); });

describe('api', () => {
  it('parses a reply with the route schema, dropping keys the schema does not name', async () => {
    const r = await api(`${base}/status`, FieldStatusReply);
    expect(r).toEqual({ field: { status: 'ingesting', failureReason: null, progress: { stage: 'tiles', fraction: 0.25 } } });
  });

  it('sends json with its content type and reads the reply', async () => {
    const r = await api(`${base}/echo`, RelinkReply, { method: 'POST', json: { fieldIds: ['a', 'b'] } });
    expect(r.queued).toEqual(['a', 'b']);
  });

  it("surfaces the server's error code and message", async () => {
    const e = await api(`${base}/conflict`, AnyReply).catch((x: unknown) => x);
    expect(e).toBeInstanceOf(ApiError);
    expect((e as ApiError).status).toBe(409);
    expect((e as ApiError).code).toBe('stale_version');
    expect(errorText(e)).toBe('Someone else changed this field; reload the page.');
  });

  it('names the status when the error body is not JSON', async () => {
    const e = await api(`${base}/crash`, AnyReply).catch((x: unknown) => x);
    expect((e as ApiError).code).toBe('http_error');
    expect((e as ApiError).message).toBe('The server answered 502.');
  });

  it('refuses a reply that does not match the schema', async () => {
    const e = await api(`${base}/wrong-shape`, RelinkReply).catch((x: unknown) => x);
    expect((e as ApiError).code).toBe('bad_reply');
  });

  it('ends a call when its signal aborts, with an AbortError rather than an ApiError', async () => {
    const ctrl = new AbortController();
    const call = api(`${base}/slow`, AnyReply, { signal: ctrl.signal });
    ctrl.abort();
    const e = await call.catch((x: unknown) => x);
    expect((e as Error).name).toBe('AbortError');
    expect(e).not.toBeInstanceOf(ApiError);
    expect(errorText(e, 'unreachable')).toBe('unreachable');
  });
});

describe('apiBytes', () => {
  it('hands over the bytes of the expected content type', async () => {
    const buf = await apiBytes(`${base}/values.f32`, 'application/octet-stream');
    expect(Array.from(new Float32Array(buf))).toEqual([1.5, -2.25]);
  });

  it('refuses another content type and surfaces error bodies', async () => {
    const wrong = await apiBytes(`${base}/status`, 'application/octet-stream').catch((x: unknown) => x);
    expect((wrong as ApiError).code).toBe('bad_reply');
    const missing = await apiBytes(`${base}/nothing.f32`, 'application/octet-stream').catch((x: unknown) => x);
    expect((missing as ApiError).status).toBe(404);
    expect((missing as ApiError).message).toBe('No such thing.');
  });
});
