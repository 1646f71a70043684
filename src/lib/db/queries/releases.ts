/** Releases of a sample: each freezes the current link run of every field, and never changes afterwards. */
import type { Db } from '../client';
import type { ReleaseInfo } from '../../reporting/types';
import { rows } from './rows';
import { getCurrentLinkRunIds } from './sampleSelection';

export type ReleaseOutcome =
  | { ok: true; release: ReleaseInfo & { linkRunIds: string[] } }
  | { ok: false; reason: 'no_fields' }
  | { ok: false; reason: 'not_approved'; notApproved: number; total: number; notApprovedFields: { name: string; status: string }[] }
  | { ok: false; reason: 'no_link_runs'; fieldsWithout: number }
  | { ok: false; reason: 'version_taken' };

/**
 * Creates the next release of a sample, freezing the current link run of each field. Refused unless
 * every field is approved and has a current link run. Two simultaneous calls race on the unique
 * (sample_id, version): the loser gets `version_taken` instead of a duplicate release.
 */
export async function createRelease(db: Db, sampleId: string, releasedBy: string, expectedVersion?: number): Promise<ReleaseOutcome> {
  const [state] = await rows<{ total: number; notApproved: number; withoutRun: number; notApprovedFields: { name: string; status: string }[] | null }>(
    db,
    `select count(*)::int as total,
            count(*) filter (where f.status <> 'approved')::int as "notApproved",
            json_agg(json_build_object('name', f.name, 'status', f.status) order by f.name, f.id) filter (where f.status <> 'approved') as "notApprovedFields",
            count(*) filter (where not exists (select 1 from link_runs lr where lr.field_id = f.id and lr.current))::int as "withoutRun"
       from fields f where f.sample_id = $1`,
    [sampleId],
  );
  if (state.total === 0) return { ok: false, reason: 'no_fields' };
  if (state.notApproved > 0) {
    return { ok: false, reason: 'not_approved', notApproved: state.notApproved, total: state.total, notApprovedFields: state.notApprovedFields ?? [] };
  }
  if (state.withoutRun > 0) return { ok: false, reason: 'no_link_runs', fieldsWithout: state.withoutRun };
  const linkRunIds = await getCurrentLinkRunIds(db, sampleId);
  try {
    // With expectedVersion (the latest release the person saw), the insert happens only if nobody
    // released since: optimistic concurrency, settled by the unique (sample, version) index on a race.
    const [row] = await rows<{ id: string; version: number; releasedAt: Date }>(
      db,
      `insert into releases (sample_id, version, link_run_ids, released_by)
       select $1, coalesce(max(version), 0) + 1, $2::jsonb, $3 from releases where sample_id = $1
       having $4::int is null or coalesce(max(version), 0) = $4::int
       returning id, version, released_at as "releasedAt"`,
      [sampleId, JSON.stringify(linkRunIds), releasedBy, expectedVersion ?? null],
    );
    if (!row) return { ok: false, reason: 'version_taken' };
    return { ok: true, release: { id: row.id, version: row.version, releasedAt: row.releasedAt.toISOString(), linkRunIds } };
  } catch (err) {
    if ((err as { code?: string }).code === '23505') return { ok: false, reason: 'version_taken' };
    throw err;
  }
}
