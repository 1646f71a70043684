/**
 * Removes field objects that no field row owns. createField copies a field's raw files to
 * fields/<id>/ before it inserts the row; when the store fails partway and the clean-up fails too,
 * the copies stay behind without a row. The worker runs this in its hourly sweep.
 */
import type { Db } from '../db/client';
import type { Storage } from '../storage/client';
import { deleteKeys, listPages, listSubPrefixes } from '../storage/objects';

const FIELD_PREFIX = /^fields\/([0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{12})\/$/;

export interface OrphanSweepResult {
  /** fields/<id>/ prefixes whose objects were all removed. */
  prefixes: string[];
  /** Objects removed in total. */
  objects: number;
}

/**
 * Deletes every fields/<id>/ prefix whose field row does not exist and whose newest object was last
 * modified before `olderThan`. A prefix with any newer object is kept: it may be a field being created
 * right now (its row is inserted only after the copies).
 * @param db - database holding the fields table
 * @param st - the object store
 * @param olderThan - cut-off; the worker passes now − 24 h
 * @returns the prefixes removed and how many objects went
 */
export async function sweepOrphanObjects(db: Db, st: Storage, olderThan: Date): Promise<OrphanSweepResult> {
  const ids: string[] = [];
  for await (const p of listSubPrefixes(st, 'fields/')) {
    const m = FIELD_PREFIX.exec(p);
    if (m) ids.push(m[1]); // anything not named by a UUID was not written by createField: leave it alone
  }
  if (!ids.length) return { prefixes: [], objects: 0 };
  // one query for all ids, as a single array parameter (no limit on how many)
  const found = await db.$client.query<{ id: string }>('select id::text as id from fields where id = any($1::uuid[])', [ids]);
  const owned = new Set(found.rows.map((r) => r.id));

  const result: OrphanSweepResult = { prefixes: [], objects: 0 };
  for (const id of ids) {
    if (owned.has(id)) continue;
    const prefix = `fields/${id}/`;
    const keys: string[] = [];
    let fresh = false;
    for await (const page of listPages(st, prefix)) {
      for (const o of page) {
        if (!o.LastModified || o.LastModified >= olderThan) fresh = true;
        keys.push(o.Key!);
      }
      if (fresh) break;
    }
    if (fresh || !keys.length) continue;
    await deleteKeys(st, keys);
    result.prefixes.push(prefix);
    result.objects += keys.length;
  }
  return result;
}
