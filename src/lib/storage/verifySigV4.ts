/**
 * Checks an S3 request's AWS Signature Version 4 the way S3 does, for the embedded object store (s3rver accepts
 * unsigned requests and does not check V4 signatures at all). The expected signature is computed with the AWS
 * SDK's own signer (@smithy/signature-v4) from the request as received, with the headers the request says it
 * signed, and compared in constant time. Header-signed requests (Authorization) and presigned URLs (X-Amz-*
 * query) are both covered; a presigned URL is bound to its method, key, expiry and signed headers (for uploads:
 * host, content-length and content-type), so it cannot be reused for another key, size or type.
 * (AWS Signature Version 4 documentation, "Authenticating requests"; docs/references.md §11.)
 */
import { createHash, createHmac, timingSafeEqual } from 'node:crypto';
import { SignatureV4 } from '@smithy/signature-v4';

export interface SigV4Credentials { accessKeyId: string; secretAccessKey: string; region: string }

export interface IncomingS3Request {
  method: string;
  /** The path as sent (still percent-encoded), without the query. */
  path: string;
  /** The raw query string, without '?'. */
  rawQuery: string;
  /** Header names in lower case. */
  headers: Record<string, string | undefined>;
}

export type SigV4Verdict =
  | { ok: true; kind: 'header' | 'query'; payloadHash: string }
  | { ok: false; status: number; code: string; message: string };

/** The longest life S3 allows a presigned URL (7 days). */
const MAX_EXPIRES_S = 7 * 24 * 3600;
/** How far a header-signed request's date may be from now (S3: 15 minutes). */
const MAX_SKEW_MS = 15 * 60 * 1000;

// The signer wants a hash "constructor" with update/digest (HMAC when given a key).
type SourceData = string | ArrayBuffer | ArrayBufferView;
const bytes = (d: SourceData) =>
  typeof d === 'string' ? d : ArrayBuffer.isView(d) ? Buffer.from(d.buffer, d.byteOffset, d.byteLength) : Buffer.from(d);
class NodeSha256 {
  private readonly h;
  constructor(secret?: SourceData) {
    this.h = secret ? createHmac('sha256', bytes(secret)) : createHash('sha256');
  }
  update(data: SourceData) {
    this.h.update(bytes(data));
  }
  async digest() {
    return new Uint8Array(this.h.digest());
  }
}

const deny = (code: string, message: string, status = 403): SigV4Verdict => ({ ok: false, status, code, message });

function parseAmzDate(v: string | undefined): Date | null {
  const m = v && /^(\d{4})(\d{2})(\d{2})T(\d{2})(\d{2})(\d{2})Z$/.exec(v);
  return m ? new Date(Date.UTC(+m[1], +m[2] - 1, +m[3], +m[4], +m[5], +m[6])) : null;
}

function parseQuery(raw: string): { pairs: [string, string][]; get: (k: string) => string | undefined } {
  const pairs = [...new URLSearchParams(raw)];
  return { pairs, get: (k) => pairs.find(([n]) => n === k)?.[1] };
}

const same = (a: string, b: string) => a.length === b.length && timingSafeEqual(Buffer.from(a), Buffer.from(b));

/**
 * @param req - the request as received
 * @param creds - the store's only credentials
 * @param now - the current time
 * @returns whether the request is properly signed, and its declared payload hash
 */
export async function verifySigV4(req: IncomingS3Request, creds: SigV4Credentials, now = new Date()): Promise<SigV4Verdict> {
  const q = parseQuery(req.rawQuery);
  const auth = req.headers.authorization;
  const isQuery = q.get('X-Amz-Algorithm') !== undefined;
  if (!auth && !isQuery) return deny('AccessDenied', 'Anonymous access is not allowed: requests must be signed.');
  if (auth && isQuery) return deny('InvalidArgument', 'Only one auth mechanism allowed.', 400);

  let credential: string, signedHeaders: string[], provided: string, date: Date | null;
  if (auth) {
    const m = /^AWS4-HMAC-SHA256 Credential=([^,]+),\s*SignedHeaders=([^,]+),\s*Signature=([0-9a-f]{64})$/.exec(auth.trim());
    if (!m) return deny('AccessDenied', 'Only AWS Signature Version 4 (AWS4-HMAC-SHA256) is accepted.');
    [, credential, , provided] = m;
    signedHeaders = m[2].split(';');
    date = parseAmzDate(req.headers['x-amz-date']);
    if (!date) return deny('AccessDenied', 'AWS authentication requires a valid x-amz-date header.');
    if (Math.abs(now.getTime() - date.getTime()) > MAX_SKEW_MS) return deny('RequestTimeTooSkewed', 'The difference between the request time and the current time is too large.');
  } else {
    if (q.get('X-Amz-Algorithm') !== 'AWS4-HMAC-SHA256') return deny('AccessDenied', 'Only AWS Signature Version 4 (AWS4-HMAC-SHA256) is accepted.');
    credential = q.get('X-Amz-Credential') ?? '';
    signedHeaders = (q.get('X-Amz-SignedHeaders') ?? '').split(';');
    provided = q.get('X-Amz-Signature') ?? '';
    date = parseAmzDate(q.get('X-Amz-Date'));
    const expires = Number(q.get('X-Amz-Expires'));
    if (!date || !Number.isInteger(expires) || expires < 1 || expires > MAX_EXPIRES_S) return deny('AccessDenied', 'The presigned URL is malformed.');
    if (now.getTime() > date.getTime() + expires * 1000) return deny('AccessDenied', 'Request has expired.');
    if (now.getTime() < date.getTime() - MAX_SKEW_MS) return deny('AccessDenied', 'The presigned URL is not valid yet.');
  }
  const [keyId, day, region, service, term] = credential.split('/');
  if (keyId !== creds.accessKeyId) return deny('InvalidAccessKeyId', 'The AWS Access Key Id you provided does not exist in our records.');
  if (region !== creds.region || service !== 's3' || term !== 'aws4_request' || day !== date.toISOString().slice(0, 10).replaceAll('-', '')) {
    return deny('AuthorizationHeaderMalformed', 'The credential scope does not match this store.', 400);
  }
  if (!signedHeaders.includes('host')) return deny('AccessDenied', 'The host header must be signed.');

  const headers: Record<string, string> = {};
  for (const name of signedHeaders) {
    const v = req.headers[name];
    if (v === undefined) return deny('SignatureDoesNotMatch', `The signed header ${name} is missing from the request.`);
    headers[name] = v;
  }
  const [hostname, port] = (headers.host ?? '').split(':');
  const signer = new SignatureV4({
    credentials: { accessKeyId: creds.accessKeyId, secretAccessKey: creds.secretAccessKey },
    region: creds.region, service: 's3', sha256: NodeSha256, uriEscapePath: false, applyChecksum: false,
  });
  const signable = new Set(signedHeaders);
  const base = { method: req.method, protocol: 'http:', hostname, port: port ? Number(port) : undefined, path: req.path };
  let expected: string | undefined;
  let payloadHash: string;
  if (auth) {
    payloadHash = req.headers['x-amz-content-sha256'] ?? '';
    if (!payloadHash) return deny('InvalidRequest', 'Missing required header for this request: x-amz-content-sha256.', 400);
    const query: Record<string, string | string[]> = {};
    for (const [k, v] of q.pairs) query[k] = k in query ? ([] as string[]).concat(query[k], v) : v;
    const signed = await signer.sign({ ...base, query, headers } as never, { signingDate: date, signableHeaders: signable });
    expected = /Signature=([0-9a-f]{64})/.exec(String((signed as { headers: Record<string, string> }).headers.authorization))?.[1];
  } else {
    payloadHash = q.get('X-Amz-Content-Sha256') ?? q.get('x-amz-content-sha256') ?? 'UNSIGNED-PAYLOAD';
    const query: Record<string, string | string[]> = {};
    for (const [k, v] of q.pairs) {
      if (k === 'X-Amz-Signature' || k.toLowerCase() === 'x-amz-content-sha256') continue;
      query[k] = k in query ? ([] as string[]).concat(query[k], v) : v;
    }
    // the SDK's presigner declares the payload hash as a header that the signer then moves into the query
    const withHash = q.get('X-Amz-Content-Sha256') !== undefined ? { ...headers, 'X-Amz-Content-Sha256': payloadHash } : headers;
    const signed = await signer.presign({ ...base, query, headers: withHash } as never, {
      signingDate: date, expiresIn: Number(q.get('X-Amz-Expires')), signableHeaders: signable,
    });
    expected = (signed as { query: Record<string, string> }).query['X-Amz-Signature'];
  }
  if (!expected || !same(expected, provided)) {
    return deny('SignatureDoesNotMatch', 'The request signature we calculated does not match the signature you provided.');
  }
  return { ok: true, kind: auth ? 'header' : 'query', payloadHash };
}
