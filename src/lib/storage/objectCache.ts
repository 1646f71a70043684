/**
 * A small in-process cache of immutable objects (rendered tiles, detection results), bounded in
 * bytes, least recently used out first (lru-cache). Keys carry the field's version, so re-ingested
 * data is never served stale. Each web process has its own; nothing here is a source of truth.
 */
import { LRUCache } from 'lru-cache';

export type ObjectCache = LRUCache<string, Uint8Array>;

/** At most maxBytes in all; an object over an eighth of that is not kept, so one large object cannot empty the cache. */
export function createObjectCache(maxBytes: number): ObjectCache {
  return new LRUCache<string, Uint8Array>({
    maxSize: maxBytes,
    maxEntrySize: Math.max(1, Math.floor(maxBytes / 8)),
    // lru-cache needs a positive size: an empty object counts as one byte
    sizeCalculation: (v) => Math.max(1, v.byteLength),
  });
}

const g = globalThis as unknown as { __heightlightObjectCache?: ObjectCache };
/** The process-wide cache (64 MB). */
export const objectCache = () => (g.__heightlightObjectCache ??= createObjectCache(64 * 1024 * 1024));
