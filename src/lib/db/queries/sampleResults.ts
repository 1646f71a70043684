/**
 * The rows a sample's results are built from, read from the per-link-run summaries (linkRunSummaries.ts) and,
 * for the quartiles, the vesicle rows (served by `vesicles_link_run_results_index`). Every number shown is
 * computed from these by the pure src/lib/reporting/buildSampleResults.ts.
 */
import type { Db } from '../client';
import type { ReleaseInfo, ResultSource, SampleResults } from '../../reporting/types';
import { buildSampleResults, type SampleFacts } from '../../reporting/buildSampleResults';
import { rows } from './rows';
import { getPanel, type SampleContext } from './sampleSelection';

/**
 * Reads the facts of `selection.linkRunIds`: quartiles, per-field marker counts (measured and positive per
 * channel), per-field phenotype counts, histograms, and one row per field: for a release the registration
 * its link run was made with and the field's status as of the release, for the preview the latest.
 */
export async function getSampleFacts(db: Db, sample: SampleContext, selection: { linkRunIds: string[]; release: ReleaseInfo | null }): Promise<Omit<SampleFacts, 'sample' | 'source' | 'release'>> {
  const panel = await getPanel(db, sample.studyId);
  const ids = selection.linkRunIds;
  const [[quartiles], markerCounts, phenotypes, histograms, fields] = await Promise.all([
    rows<{ dq: number[] | null; hq: number[] | null }>(
      db,
      `select percentile_cont(array[0.25, 0.5, 0.75]) within group (order by diameter_nm) as dq,
              percentile_cont(array[0.25, 0.5, 0.75]) within group (order by height_nm) as hq
         from vesicles where link_run_id = any($1::uuid[])`,
      [ids],
    ),
    rows<{ fieldId: string; channelIndex: number; measured: number; positive: number }>(
      db,
      `select lr.field_id as "fieldId", c.channel_index as "channelIndex", sum(c.n_measured)::int as measured, sum(c.n_positive)::int as positive
         from link_run_marker_counts c join link_runs lr on lr.id = c.link_run_id
        where c.link_run_id = any($1::uuid[]) group by 1, 2`,
      [ids],
    ),
    rows<{ fieldId: string; bits: number; n: number }>(
      db,
      `select lr.field_id as "fieldId", p.marker_bits as bits, sum(p.n)::int as n
         from link_run_phenotypes p join link_runs lr on lr.id = p.link_run_id
        where p.link_run_id = any($1::uuid[]) group by 1, 2`,
      [ids],
    ),
    rows<{ measure: 'diameter_nm' | 'height_nm'; bits: number; bucket: number; n: number }>(
      db,
      `select measure, marker_bits as bits, bucket, sum(n)::int as n
         from link_run_histograms where link_run_id = any($1::uuid[]) group by 1, 2, 3`,
      [ids],
    ),
    rows<SampleFacts['fields'][number]>(
      db,
      `select f.id as "fieldId", f.name,
              case when $3::timestamptz is null then f.status::text
                   else coalesce((select case fr.decision when 'approved' then 'approved' else 'registered' end
                                    from field_reviews fr
                                   where fr.link_run_id = lr.id and fr.reviewed_at <= $3::timestamptz
                                   order by fr.reviewed_at desc limit 1), 'approved') end as status,
              f.afm_pixel_nm as "afmPixelNm", f.fl_pixel_nm as "flPixelNm",
              r.fre_nm as "freNm", r.tre_nm as "treNm", r.version as "registrationVersion", r.nb as "nbFiducials",
              (select coalesce(sum(h.n), 0)::int from link_runs l join link_run_histograms h on h.link_run_id = l.id
                where l.field_id = f.id and l.id = any($2::uuid[]) and h.measure = 'diameter_nm') as vesicles
         from fields f
         -- only fields in the selection: a collaborator must not learn of fields added after the release
         join lateral (
           select id, registration_id from link_runs where field_id = f.id and id = any($2::uuid[]) order by created_at desc limit 1
         ) lr on true
         left join lateral (
           select fre_nm, tre_nm, version, jsonb_array_length(pairs)::int as nb from registrations
            where case when $3::timestamptz is null then field_id = f.id else id = lr.registration_id end
            order by version desc limit 1
         ) r on true
        where f.sample_id = $1
        order by f.name, f.id`,
      [sample.id, ids, selection.release?.releasedAt ?? null],
    ),
  ]);
  return { panel, quartiles: { diameterNm: quartiles?.dq ?? null, heightNm: quartiles?.hq ?? null }, markerCounts, phenotypes, histograms, fields };
}

/** A sample's results over the link runs of `selection` (see getSampleFacts and buildSampleResults). */
export async function getSampleResults(
  db: Db,
  sample: SampleContext,
  selection: { source: ResultSource; release: ReleaseInfo | null; linkRunIds: string[] },
): Promise<SampleResults> {
  const facts = await getSampleFacts(db, sample, selection);
  return buildSampleResults({ ...facts, sample, source: selection.source, release: selection.release });
}
