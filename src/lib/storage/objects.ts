import {
  PutObjectCommand, GetObjectCommand, HeadObjectCommand, DeleteObjectCommand, ListObjectsV2Command, DeleteObjectsCommand, CopyObjectCommand,
  type _Object,
} from '@aws-sdk/client-s3';
import { getSignedUrl } from '@aws-sdk/s3-request-presigner';
import type { Readable } from 'node:stream';
import type { Storage } from './client';

/** A presigned PUT the browser uses to send a file straight to the bucket (the server never holds it). */
export function presignPut(st: Storage, key: string, sizeBytes: number, expiresInS = 3600) {
  return getSignedUrl(st.s3, new PutObjectCommand({ Bucket: st.bucket, Key: key, ContentLength: sizeBytes, ContentType: 'image/tiff' }), { expiresIn: expiresInS });
}

/** Size of an object, or null when it does not exist. */
export async function headSize(st: Storage, key: string): Promise<number | null> {
  try {
    const r = await st.s3.send(new HeadObjectCommand({ Bucket: st.bucket, Key: key }));
    return r.ContentLength ?? 0;
  } catch (e) {
    const status = (e as { $metadata?: { httpStatusCode?: number } }).$metadata?.httpStatusCode;
    if (status === 404 || (e as Error).name === 'NotFound' || (e as Error).name === 'NoSuchKey') return null;
    throw e;
  }
}

export async function getBytes(st: Storage, key: string): Promise<Uint8Array> {
  const r = await st.s3.send(new GetObjectCommand({ Bucket: st.bucket, Key: key }));
  return r.Body!.transformToByteArray();
}

/** A readable stream of an object, with its length and type, for proxying to a client. */
export async function getStream(st: Storage, key: string) {
  const r = await st.s3.send(new GetObjectCommand({ Bucket: st.bucket, Key: key }));
  return { body: r.Body as Readable, length: r.ContentLength, type: r.ContentType };
}

export async function putBytes(st: Storage, key: string, body: Uint8Array | string, contentType: string) {
  await st.s3.send(new PutObjectCommand({ Bucket: st.bucket, Key: key, Body: body, ContentType: contentType }));
}

export async function copyObject(st: Storage, from: string, to: string) {
  await st.s3.send(new CopyObjectCommand({ Bucket: st.bucket, CopySource: `${st.bucket}/${from}`, Key: to }));
}

export async function deleteObject(st: Storage, key: string) {
  await st.s3.send(new DeleteObjectCommand({ Bucket: st.bucket, Key: key }));
}

/** The objects under `prefix`, one ListObjectsV2 page (up to 1,000) at a time. */
export async function* listPages(st: Storage, prefix = ''): AsyncGenerator<_Object[]> {
  let token: string | undefined;
  do {
    const page = await st.s3.send(new ListObjectsV2Command({ Bucket: st.bucket, Prefix: prefix || undefined, ContinuationToken: token }));
    yield page.Contents ?? [];
    token = page.IsTruncated ? page.NextContinuationToken : undefined;
  } while (token);
}

/** Deletes every object under `prefix` (a field's tiles when it is re-ingested or removed). */
export async function deletePrefix(st: Storage, prefix: string) {
  for await (const page of listPages(st, prefix)) {
    const keys = page.map((o) => ({ Key: o.Key! }));
    if (keys.length) await st.s3.send(new DeleteObjectsCommand({ Bucket: st.bucket, Delete: { Objects: keys } }));
  }
}

/** Lists keys under a prefix (used by backups and tests). */
export async function listKeys(st: Storage, prefix: string): Promise<string[]> {
  const out: string[] = [];
  for await (const page of listPages(st, prefix)) for (const o of page) out.push(o.Key!);
  return out;
}

/** Bytes [start, endExclusive) of an object (an HTTP Range request). */
export async function getRange(st: Storage, key: string, start: number, endExclusive: number): Promise<Uint8Array> {
  const r = await st.s3.send(new GetObjectCommand({ Bucket: st.bucket, Key: key, Range: `bytes=${start}-${endExclusive - 1}` }));
  return r.Body!.transformToByteArray();
}

/** Deletes objects under `prefix` last modified before `olderThan`; returns how many went. */
export async function deleteOlderThan(st: Storage, prefix: string, olderThan: Date): Promise<number> {
  let n = 0;
  for await (const page of listPages(st, prefix)) {
    const old = page.filter((o) => o.LastModified && o.LastModified < olderThan).map((o) => ({ Key: o.Key! }));
    if (old.length) await st.s3.send(new DeleteObjectsCommand({ Bucket: st.bucket, Delete: { Objects: old } }));
    n += old.length;
  }
  return n;
}
