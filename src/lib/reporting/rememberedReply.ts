/**
 * The shared step of the results caches (sampleResultsCache.ts, comparisonCache.ts): answer from a per-process
 * memory under a key made of every input, or compute and remember. Only while the app's access memory is
 * listening (its own database handle, see appAccessCache), so scripts and tests with their own handle always
 * compute afresh.
 */
import type { LRUCache } from 'lru-cache';
import type { Db } from '../db/client';
import { appAccessCache } from '../auth/session';

export async function rememberedReply<V extends object>(
  db: Db, memory: LRUCache<string, V>, key: () => Promise<string>, compute: () => Promise<V>,
): Promise<V> {
  if (!appAccessCache(db)?.active) return compute();
  const k = await key();
  const hit = memory.get(k);
  if (hit) return hit;
  const fresh = await compute();
  memory.set(k, fresh);
  return fresh;
}
