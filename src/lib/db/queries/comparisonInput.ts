/**
 * The rows a study's group comparison is built from: per sample and field, the marker counts (measured and
 * positive per channel) and phenotype counts of the selected link runs, and each sample's median sizes. No
 * statistics here: src/lib/reporting/buildStudyComparison.ts computes every number from these rows.
 */
import type { Db } from '../client';
import type { ResultSource } from '../../reporting/types';
import type { ComparisonRows } from '../../reporting/buildStudyComparison';
import { rows } from './rows';
import { SIZE_BINS_PER_NM } from './linkRunSummaries';

/**
 * SQL (a CTE body) selecting `sample_id, code, group_label, version, link_run_id` for every sample of
 * study $1: its latest release's link runs (released runs are frozen in releases.link_run_ids), or its
 * current link runs.
 */
function selectionCte(source: ResultSource): string {
  return source === 'released'
    ? `select s.id as sample_id, s.code, s.group_label, r.version, x.id::uuid as link_run_id
         from samples s
         join lateral (select version, link_run_ids from releases where sample_id = s.id order by version desc limit 1) r on true
         cross join lateral jsonb_array_elements_text(r.link_run_ids) as x(id)
        where s.study_id = $1`
    : `select s.id as sample_id, s.code, s.group_label, null::int as version, lr.id as link_run_id
         from samples s join fields f on f.sample_id = s.id join link_runs lr on lr.field_id = f.id and lr.current
        where s.study_id = $1`;
}

/**
 * The study's name and a fingerprint of what a comparison of `source` is computed from: every sample's id,
 * code, group and release version, and the link runs selected (each link run's rows never change). Null when
 * there is no such study.
 */
export async function getComparisonFacts(db: Db, studyId: string, source: ResultSource): Promise<{ name: string; fingerprint: string } | null> {
  const [row] = await rows<{ name: string | null; fingerprint: string | null }>(
    db,
    `select (select name from studies where id = $1) as name,
            (with sel as (${selectionCte(source)})
             select md5(string_agg(concat_ws('/', sample_id, code, group_label, version, link_run_id), ',' order by sample_id, link_run_id)) from sel) as fingerprint`,
    [studyId],
  );
  return row?.name == null ? null : { name: row.name, fingerprint: row.fingerprint ?? '' };
}

/**
 * Per-sample, per-field counts of the selection and per-sample median sizes (of the 0.5 nm / 0.1 nm
 * rounded values in link_run_size_bins: the middle value, or the mean of the two middle ones).
 */
export async function getComparisonRows(db: Db, studyId: string, source: ResultSource): Promise<ComparisonRows> {
  const [samples, markerCounts, phenotypes, medians] = await Promise.all([
    rows<ComparisonRows['samples'][number]>(
      db,
      `with sel as (${selectionCte(source)}),
            v as (select link_run_id, sum(n)::int as n from link_run_histograms
                   where measure = 'diameter_nm' and link_run_id in (select link_run_id from sel) group by 1)
       select sel.sample_id as "sampleId", sel.code, sel.group_label as "groupLabel", max(sel.version) as "releaseVersion",
              count(distinct lr.field_id)::int as fields, coalesce(sum(v.n), 0)::int as vesicles
         from sel join link_runs lr on lr.id = sel.link_run_id left join v on v.link_run_id = sel.link_run_id
        group by 1, 2, 3 order by 3, 2`,
      [studyId],
    ),
    rows<ComparisonRows['markerCounts'][number]>(
      db,
      `with sel as (${selectionCte(source)})
       select sel.sample_id as "sampleId", lr.field_id as "fieldId", c.channel_index as "channelIndex",
              sum(c.n_measured)::int as measured, sum(c.n_positive)::int as positive
         from sel join link_runs lr on lr.id = sel.link_run_id join link_run_marker_counts c on c.link_run_id = sel.link_run_id
        group by 1, 2, 3`,
      [studyId],
    ),
    rows<ComparisonRows['phenotypes'][number]>(
      db,
      `with sel as (${selectionCte(source)})
       select sel.sample_id as "sampleId", lr.field_id as "fieldId", p.marker_bits as bits, sum(p.n)::int as n
         from sel join link_runs lr on lr.id = sel.link_run_id join link_run_phenotypes p on p.link_run_id = sel.link_run_id
        group by 1, 2, 3`,
      [studyId],
    ),
    rows<{ sampleId: string; measure: 'diameter_nm' | 'height_nm'; lo: number | null; hi: number | null }>(
      db,
      // the value at 1-based position k is the smallest bin whose running count reaches k
      `with sel as (${selectionCte(source)}),
            b as (select sel.sample_id, s.measure, s.bin, sum(s.n) as n
                    from sel join link_run_size_bins s on s.link_run_id = sel.link_run_id group by 1, 2, 3),
            c as (select *, sum(n) over (partition by sample_id, measure order by bin) as cum,
                            sum(n) over (partition by sample_id, measure) as tot from b)
       select sample_id as "sampleId", measure,
              min(bin) filter (where cum >= floor((tot + 1) / 2)) as lo,
              min(bin) filter (where cum >= floor(tot / 2) + 1) as hi
         from c group by 1, 2`,
      [studyId],
    ),
  ]);
  const median = (sampleId: string, measure: 'diameter_nm' | 'height_nm') => {
    const m = medians.find((x) => x.sampleId === sampleId && x.measure === measure);
    return m && m.lo !== null && m.hi !== null ? (m.lo + m.hi) / 2 / SIZE_BINS_PER_NM[measure] : null;
  };
  return {
    samples: samples.map((s) => ({ ...s, medianDiameterNm: median(s.sampleId, 'diameter_nm'), medianHeightNm: median(s.sampleId, 'height_nm') })),
    markerCounts,
    phenotypes,
  };
}
