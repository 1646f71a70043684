/** Removing a field that is neither approved nor released, and the release membership that forbids it. */
import type { Db } from '../client';
import type { Queryable } from './rows';

export type FieldRemoval =
  | { ok: true; field: { id: string; name: string; sampleId: string; status: string; version: number }; objectKeys: string[] }
  | { ok: false; reason: 'not_found' }
  | { ok: false; reason: 'approved' | 'processing'; name: string }
  | { ok: false; reason: 'stale'; name: string; version: number }
  | { ok: false; reason: 'released'; name: string; releaseVersions: number[] };

/** Versions of the releases (of the field's own sample) that hold one of the field's link runs, ascending. */
export async function fieldReleaseVersions(q: Queryable, fieldId: string): Promise<number[]> {
  const { rows } = await q.query(
    `select r.version from releases r join fields f on f.sample_id = r.sample_id
      where f.id = $1 and r.link_run_ids ?| array(select lr.id::text from link_runs lr where lr.field_id = $1)
      order by r.version`,
    [fieldId],
  );
  return (rows as { version: number }[]).map((r) => r.version);
}

/**
 * Removes a field and, by cascade, its files, tiles, registrations, link runs, vesicles and reviews, in one
 * transaction. Refused for an approved field, for one being ingested (the job would write tiles after the
 * removal), and for one whose link runs are in any release of its sample: released results never lose rows.
 * The field row is locked first, so an approval or a release cannot slip in between the checks and the delete;
 * `expectedVersion` is the field version the person saw (a field changed since is refused as `stale`).
 * Returns the object keys of the field's files, for the caller to remove from storage after the commit.
 */
export async function removeField(db: Db, fieldId: string, expectedVersion: number): Promise<FieldRemoval> {
  const client = await db.$client.connect();
  const one = async <T>(text: string, params: unknown[]) => (await client.query(text, params)).rows as T[];
  try {
    await client.query('begin');
    const outcome = await (async (): Promise<FieldRemoval> => {
      const [field] = await one<{ id: string; name: string; sampleId: string; status: string; version: number }>(
        `select id, name, sample_id as "sampleId", status::text as status, version from fields where id = $1 for update`,
        [fieldId],
      );
      if (!field) return { ok: false, reason: 'not_found' };
      if (field.version !== expectedVersion) return { ok: false, reason: 'stale', name: field.name, version: field.version };
      if (field.status === 'approved') return { ok: false, reason: 'approved', name: field.name };
      if (field.status === 'ingesting') return { ok: false, reason: 'processing', name: field.name };
      const released = await fieldReleaseVersions(client, fieldId);
      if (released.length) return { ok: false, reason: 'released', name: field.name, releaseVersions: released };
      const files = await one<{ objectKey: string }>(`select object_key as "objectKey" from field_files where field_id = $1`, [fieldId]);
      await one(`delete from fields where id = $1`, [fieldId]);
      return { ok: true, field, objectKeys: files.map((f) => f.objectKey) };
    })();
    await client.query(outcome.ok ? 'commit' : 'rollback');
    return outcome;
  } catch (err) {
    await client.query('rollback').catch(() => {});
    throw err;
  } finally {
    client.release();
  }
}
