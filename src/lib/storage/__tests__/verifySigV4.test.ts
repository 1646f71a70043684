import { describe, it, expect } from 'vitest';
import { S3Client, PutObjectCommand, GetObjectCommand } from '@aws-sdk/client-s3';
import { getSignedUrl } from '@aws-sdk/s3-request-presigner';
import { verifySigV4, type IncomingS3Request } from '../verifySigV4';

// Reference: requests signed by the AWS SDK itself (client-s3 and s3-request-presigner) must pass; any change to
// method, key, signed header, expiry or signature must fail (AWS Signature Version 4, docs/references.md §11).
const creds = { accessKeyId: 'S3RVER', secretAccessKey: 'S3RVER', region: 'us-east-1' };
const endpoint = 'http://127.0.0.1:45999';

function client(capture?: (r: { method: string; path: string; query: Record<string, string>; headers: Record<string, string> }) => void) {
  return new S3Client({
    endpoint, region: 'us-east-1', forcePathStyle: true, credentials: creds,
    requestChecksumCalculation: 'WHEN_REQUIRED', responseChecksumValidation: 'WHEN_REQUIRED',
    requestHandler: { handle: async (req: never) => { capture?.(req); throw new Error('captured'); } } as never,
  });
}

function fromUrl(method: string, url: string, headers: Record<string, string>): IncomingS3Request {
  const u = new URL(url);
  return { method, path: u.pathname, rawQuery: u.search.slice(1), headers: { host: u.host, ...headers } };
}

describe('verifySigV4', () => {
  it('accepts an SDK presigned PUT only with its own key, size and type, before it expires', async () => {
    const url = await getSignedUrl(client(), new PutObjectCommand({ Bucket: 'b', Key: 'staging/u/1.tif', ContentLength: 1234, ContentType: 'image/tiff' }), {
      expiresIn: 600, signableHeaders: new Set(['content-type', 'content-length']),
    });
    const good = { 'content-length': '1234', 'content-type': 'image/tiff' };
    expect(await verifySigV4(fromUrl('PUT', url, good), creds)).toMatchObject({ ok: true, kind: 'query' });
    expect(await verifySigV4(fromUrl('PUT', url.replace('/1.tif', '/2.tif'), good), creds)).toMatchObject({ ok: false, code: 'SignatureDoesNotMatch' });
    expect(await verifySigV4(fromUrl('PUT', url, { ...good, 'content-length': '99999' }), creds)).toMatchObject({ ok: false, code: 'SignatureDoesNotMatch' });
    expect(await verifySigV4(fromUrl('PUT', url, { ...good, 'content-type': 'text/html' }), creds)).toMatchObject({ ok: false, code: 'SignatureDoesNotMatch' });
    expect(await verifySigV4(fromUrl('GET', url, good), creds)).toMatchObject({ ok: false, code: 'SignatureDoesNotMatch' });
    expect(await verifySigV4(fromUrl('PUT', url, good), creds, new Date(Date.now() + 601_000))).toMatchObject({ ok: false, message: 'Request has expired.' });
    expect(await verifySigV4(fromUrl('PUT', url, good), { ...creds, secretAccessKey: 'other' })).toMatchObject({ ok: false, code: 'SignatureDoesNotMatch' });
  });

  it('accepts an SDK header-signed request and refuses it altered or unsigned', async () => {
    let cap: { method: string; path: string; query: Record<string, string>; headers: Record<string, string> } | undefined;
    await client((r) => { cap = r; }).send(new GetObjectCommand({ Bucket: 'b', Key: 'fields/x/detection.json', Range: 'bytes=0-9' })).catch(() => undefined);
    const headers = Object.fromEntries(Object.entries(cap!.headers).map(([k, v]) => [k.toLowerCase(), v]));
    const rawQuery = new URLSearchParams(cap!.query).toString();
    const req = { method: 'GET', path: cap!.path, rawQuery, headers };
    expect(await verifySigV4(req, creds)).toMatchObject({ ok: true, kind: 'header' });
    expect(await verifySigV4({ ...req, path: cap!.path.replace('/x/', '/y/') }, creds)).toMatchObject({ ok: false, code: 'SignatureDoesNotMatch' });
    expect(await verifySigV4({ ...req, headers: { ...headers, range: 'bytes=0-99' } }, creds)).toMatchObject({ ok: false, code: 'SignatureDoesNotMatch' });
    expect(await verifySigV4({ ...req, headers: { host: headers.host } }, creds)).toMatchObject({ ok: false, code: 'AccessDenied' });
  });
});
