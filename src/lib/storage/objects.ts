import {
  PutObjectCommand, GetObjectCommand, HeadObjectCommand, DeleteObjectCommand, ListObjectsCommand, DeleteObjectsCommand, CopyObjectCommand,
  type _Object,
} from '@aws-sdk/client-s3';
import { getSignedUrl } from '@aws-sdk/s3-request-presigner';
import type { Readable } from 'node:stream';
import type { Storage } from './client';

/** How long a presigned upload URL can be started (s): minutes, not an hour. */
export const PRESIGNED_PUT_TTL_S = 10 * 60;

/**
 * A presigned PUT the browser uses to send a file straight to the bucket (the server never holds it). The
 * signature covers the key, the exact size and the content type (the presigner leaves content-type unsigned
 * unless asked), so the URL cannot send another size, type or key.
 */
export function presignPut(st: Storage, key: string, sizeBytes: number, expiresInS = PRESIGNED_PUT_TTL_S) {
  return getSignedUrl(st.s3, new PutObjectCommand({ Bucket: st.bucket, Key: key, ContentLength: sizeBytes, ContentType: 'image/tiff' }), {
    expiresIn: expiresInS,
    signableHeaders: new Set(['content-length', 'content-type']),
  });
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

/**
 * The objects under `prefix`, one listing page (up to 1,000) at a time, in key order.
 * ListObjects version 1 (Marker = the last key seen) rather than V2: s3rver, the embedded store,
 * answers a truncated V2 listing with an error on OpenSSL 3 (its continuation token uses a cipher
 * OpenSSL 3 disables), so a V2 pager stops at 1,000 objects there. Real S3 serves both.
 */
export async function* listPages(st: Storage, prefix = ''): AsyncGenerator<_Object[]> {
  let marker: string | undefined;
  for (;;) {
    const page = await st.s3.send(new ListObjectsCommand({ Bucket: st.bucket, Prefix: prefix || undefined, Marker: marker }));
    const objects = page.Contents ?? [];
    yield objects;
    if (!page.IsTruncated || !objects.length) return;
    marker = objects[objects.length - 1].Key;
  }
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

/**
 * The next-level "folders" under `prefix` that hold at least one object, in key order: for 'fields/'
 * these are 'fields/<id>/'. One listing request per folder: each asks for the first key after
 * the folder just found (StartAfter), so the objects inside a folder are never listed.
 * Why not Delimiter '/': s3rver, the embedded store, omits folders whose objects all sit deeper than
 * one level (fields/<id>/raw/<file>.tif only, exactly what an interrupted field creation leaves).
 * ListObjects (version 1, Marker) rather than V2: s3rver answers a truncated V2 listing with an error
 * on OpenSSL 3 (its continuation token uses a cipher OpenSSL 3 disables), and MaxKeys 1 always truncates.
 * An object named exactly `<folder>0` directly under `prefix` is skipped over; it is no folder anyway.
 */
export async function* listSubPrefixes(st: Storage, prefix: string): AsyncGenerator<string> {
  let after = prefix;
  for (;;) {
    const page = await st.s3.send(new ListObjectsCommand({ Bucket: st.bucket, Prefix: prefix, Marker: after, MaxKeys: 1 }));
    const key = page.Contents?.[0]?.Key;
    if (!key) return;
    const slash = key.indexOf('/', prefix.length);
    if (slash === -1) {
      after = key; // an object directly under prefix
      continue;
    }
    yield key.slice(0, slash + 1);
    // '0' is the character after '/': every key inside this folder sorts before `<folder>0`
    after = `${key.slice(0, slash)}0`;
  }
}

/** Deletes the given keys, up to 1,000 per DeleteObjects request. */
export async function deleteKeys(st: Storage, keys: string[]) {
  for (let i = 0; i < keys.length; i += 1000) {
    await st.s3.send(new DeleteObjectsCommand({ Bucket: st.bucket, Delete: { Objects: keys.slice(i, i + 1000).map((Key) => ({ Key })) } }));
  }
}
