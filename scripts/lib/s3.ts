/**
 * The local S3 fake (s3rver) on 127.0.0.1, with a bucket whose CORS rules allow presigned PUTs from the app,
 * behind a gate that authenticates every request as S3 does.
 *
 * s3rver alone accepts unsigned requests and never checks Signature Version 4, so on a shared host any local
 * user could read, replace or delete every image and result. Here s3rver listens only on a Unix socket in the
 * data folder (mode 0600: other users cannot connect), and the TCP port is a small gate that forwards a request
 * only when its SigV4 signature (header-signed or presigned) matches the store's credentials
 * (src/lib/storage/verifySigV4.ts), and, for a header-signed body with a declared SHA-256, when the body matches
 * it. CORS preflights (OPTIONS) pass unsigned, as on S3. Why own code: no maintained package puts SigV4
 * authentication in front of an S3 fake; the signature itself is the AWS SDK's signer.
 */
import S3rver from 's3rver';
import http from 'node:http';
import { createHash } from 'node:crypto';
import { chmodSync, mkdirSync, rmSync } from 'node:fs';
import { verifySigV4, type SigV4Credentials } from '../../src/lib/storage/verifySigV4';

const corsXml = (origin: string) => `<CORSConfiguration>
  <CORSRule>
    <AllowedOrigin>${origin}</AllowedOrigin>
    <AllowedMethod>GET</AllowedMethod>
    <AllowedMethod>PUT</AllowedMethod>
    <AllowedMethod>HEAD</AllowedMethod>
    <AllowedHeader>*</AllowedHeader>
    <ExposeHeader>ETag</ExposeHeader>
    <MaxAgeSeconds>3000</MaxAgeSeconds>
  </CORSRule>
</CORSConfiguration>`;

/** Header-signed bodies with a declared hash are read whole to check it; larger ones must be sent unsigned-payload. */
const MAX_HASHED_BODY_BYTES = 512 * 1024 ** 2;

const xmlError = (code: string, message: string) =>
  `<?xml version="1.0" encoding="UTF-8"?>\n<Error><Code>${code}</Code><Message>${message.replace(/[<&]/g, ' ')}</Message></Error>`;

export interface StartS3Options {
  port: number;
  directory: string;
  bucket: string;
  appOrigin: string;
  /** The store's only credentials (default: s3rver's S3RVER / S3RVER, region us-east-1). */
  credentials?: SigV4Credentials;
}

export async function startS3(opts: StartS3Options) {
  mkdirSync(opts.directory, { recursive: true });
  const creds = opts.credentials ?? { accessKeyId: 'S3RVER', secretAccessKey: 'S3RVER', region: 'us-east-1' };
  const socketPath = `${opts.directory.replace(/\/+$/, '')}.sock`;
  rmSync(socketPath, { force: true });
  const store = new S3rver({
    directory: opts.directory,
    silent: true,
    configureBuckets: [{ name: opts.bucket, configs: [corsXml(opts.appOrigin)] }],
  });
  await store.configureBuckets();
  const inner = (await store.listen(socketPath)) as http.Server;
  chmodSync(socketPath, 0o600);

  const refuse = (res: http.ServerResponse, status: number, code: string, message: string) => {
    res.writeHead(status, { 'content-type': 'application/xml', 'access-control-allow-origin': opts.appOrigin });
    res.end(xmlError(code, message));
  };

  const forward = (req: http.IncomingMessage, res: http.ServerResponse, body?: Buffer) => {
    const up = http.request({ socketPath, method: req.method, path: req.url, headers: req.headers }, (r) => {
      res.writeHead(r.statusCode ?? 502, r.headers);
      r.pipe(res);
    });
    up.on('error', () => { if (!res.headersSent) refuse(res, 502, 'InternalError', 'The store did not answer.'); else res.destroy(); });
    if (body) up.end(body);
    else req.pipe(up);
  };

  const gate = http.createServer(async (req, res) => {
    try {
      if (req.method === 'OPTIONS') return forward(req, res); // CORS preflight: never signed, on S3 either
      const url = req.url ?? '/';
      const qi = url.indexOf('?');
      const headers = Object.fromEntries(Object.entries(req.headers).map(([k, v]) => [k, Array.isArray(v) ? v.join(',') : v]));
      const verdict = await verifySigV4({ method: req.method ?? 'GET', path: qi < 0 ? url : url.slice(0, qi), rawQuery: qi < 0 ? '' : url.slice(qi + 1), headers }, creds);
      if (!verdict.ok) {
        req.resume();
        return refuse(res, verdict.status, verdict.code, verdict.message);
      }
      if (!/^[0-9a-f]{64}$/.test(verdict.payloadHash)) return forward(req, res);
      // a declared body hash is checked before anything reaches the store
      const chunks: Buffer[] = [];
      let size = 0;
      for await (const c of req) {
        size += (c as Buffer).length;
        if (size > MAX_HASHED_BODY_BYTES) return refuse(res, 400, 'EntityTooLarge', 'Send bodies this large with UNSIGNED-PAYLOAD.');
        chunks.push(c as Buffer);
      }
      const body = Buffer.concat(chunks);
      if (createHash('sha256').update(body).digest('hex') !== verdict.payloadHash) {
        return refuse(res, 400, 'XAmzContentSHA256Mismatch', 'The provided x-amz-content-sha256 header does not match what was computed.');
      }
      forward(req, res, body);
    } catch (e) {
      if (!res.headersSent) refuse(res, 500, 'InternalError', (e as Error).message);
    }
  });
  await new Promise<void>((resolve, reject) => gate.once('error', reject).listen(opts.port, '127.0.0.1', () => resolve()));
  return {
    stop: () =>
      Promise.all([
        new Promise<void>((r) => gate.close(() => r())),
        new Promise<void>((r) => inner.close(() => r())),
      ]).then(() => rmSync(socketPath, { force: true })),
  };
}
