/**
 * Released results: releases of a sample, and the per-sample and per-study aggregates shown to
 * collaborators. Every number is computed by PostgreSQL: counts and histograms are sums over the
 * per-link-run summaries (linkRunSummaries.ts), quartiles aggregate the sample's vesicle rows
 * (served by `vesicles_link_run_results_index`). Vesicle rows reach Node only in the streamed
 * per-vesicle export and, for groups of at most {@link MAX_RANK_SAMPLE} vesicles, for the rank-sum test.
 */
import type { Db } from '../client';
import type { SessionUser } from '../../auth/permissions';
import { appAccessCache } from '../../auth/session';
import { estimateProportion } from '../../reporting/estimate';
import { phenotypeLabel } from '../../reporting/phenotypeLabel';
import type {
  FieldBreakdown, Histogram, MarkerComparison, MarkerFraction, PhenotypeCount, ReleaseInfo, ResultSource,
  SampleMarkerRow, SampleResults, SizeComparison, StudyComparison,
} from '../../reporting/types';
import { benjaminiHochberg, compareProportions, mannWhitneyU } from '../../analysis/stats';
import { DIAMETER_BINS, HEIGHT_BINS, SIZE_BINS_PER_NM, binnedMedian, mannWhitneyUBinned, type BinnedPair } from './linkRunSummaries';

export { DIAMETER_BINS, HEIGHT_BINS };
/**
 * Groups up to this many vesicles enter the Mann–Whitney test with their exact values (read from the
 * vesicle rows); larger groups use every vesicle's binned value (SIZE_BINS_PER_NM) from the summaries.
 */
export const MAX_RANK_SAMPLE = 5000;

type Panel = { channelIndex: number; marker: string }[];

async function rows<T>(db: Db, text: string, params: unknown[] = []): Promise<T[]> {
  return (await db.$client.query(text, params)).rows as T[];
}

/** Bit of a panel channel in `marker_bits`; channel indexes are integers from the DB, never user text. */
function channelBit(channelIndex: number): number {
  if (!Number.isInteger(channelIndex) || channelIndex < 0 || channelIndex > 30) throw new RangeError(`channel index ${channelIndex} out of 0…30`);
  return 2 ** channelIndex;
}

/** Marker-positive counts per panel channel, summed over link_run_phenotypes rows aliased `alias`. */
function markerSumColumns(panel: Panel, alias: string): string {
  return panel
    .map((c) => `coalesce(sum(${alias}.n) filter (where ${alias}.marker_bits & ${channelBit(c.channelIndex)} <> 0), 0)::int as p${c.channelIndex}`)
    .join(', ');
}

export interface SampleContext {
  id: string;
  code: string;
  groupLabel: string;
  controlKind: string;
  studyId: string;
  studyName: string;
}

/** The sample with its study, or null. */
export async function getSampleContext(db: Db, sampleId: string): Promise<SampleContext | null> {
  const [row] = await rows<SampleContext>(
    db,
    `select s.id, s.code, s.group_label as "groupLabel", s.control_kind as "controlKind", s.study_id as "studyId", st.name as "studyName"
       from samples s join studies st on st.id = s.study_id where s.id = $1`,
    [sampleId],
  );
  return row ?? null;
}

/** The study's marker panel in channel order. */
export async function getPanel(db: Db, studyId: string): Promise<Panel> {
  const load = () => rows<{ channelIndex: number; marker: string }>(
    db,
    `select channel_index as "channelIndex", marker from marker_channels where study_id = $1 order by channel_index`,
    [studyId],
  );
  const cache = appAccessCache(db);
  return cache ? ((await cache.panel(studyId, async () => ({ channels: await load() })))!).channels : load();
}

/**
 * What the results guard needs about a sample, in one round trip: the sample, its current link runs and its
 * latest release (null when never released). Null when there is no such sample.
 */
export async function getSampleSelectionFacts(db: Db, sampleId: string): Promise<{
  sample: SampleContext; currentLinkRunIds: string[]; latestRelease: (ReleaseInfo & { linkRunIds: string[] }) | null; fieldsFingerprint: string;
} | null> {
  const [row] = await rows<SampleContext & { currentLinkRunIds: string[]; fieldsFingerprint: string | null; release: { id: string; version: number; releasedAt: string; linkRunIds: string[] } | null }>(
    db,
    `select s.id, s.code, s.group_label as "groupLabel", s.control_kind as "controlKind", s.study_id as "studyId", st.name as "studyName",
            array(select lr.id::text from link_runs lr join fields f on f.id = lr.field_id where f.sample_id = s.id and lr.current order by lr.id) as "currentLinkRunIds",
            -- every field column the per-field breakdown shows, and each field's latest registration version
            (select md5(string_agg(concat_ws('/', f.id, f.version, f.status, f.name, f.afm_pixel_nm, f.fl_pixel_nm,
                                             (select max(r.version) from registrations r where r.field_id = f.id)), ',' order by f.id))
               from fields f where f.sample_id = s.id) as "fieldsFingerprint",
            (select json_build_object('id', r.id, 'version', r.version, 'releasedAt', r.released_at, 'linkRunIds', r.link_run_ids)
               from releases r where r.sample_id = s.id order by r.version desc limit 1) as release
       from samples s join studies st on st.id = s.study_id where s.id = $1`,
    [sampleId],
  );
  if (!row) return null;
  const { currentLinkRunIds, release, fieldsFingerprint, ...sample } = row;
  return {
    sample,
    currentLinkRunIds,
    fieldsFingerprint: fieldsFingerprint ?? '',
    latestRelease: release ? { id: release.id, version: release.version, releasedAt: new Date(release.releasedAt).toISOString(), linkRunIds: release.linkRunIds } : null,
  };
}

/** Ids of the current link runs of the sample's fields (what a new release would freeze). */
export async function getCurrentLinkRunIds(db: Db, sampleId: string): Promise<string[]> {
  const r = await rows<{ id: string }>(
    db,
    `select lr.id from link_runs lr join fields f on f.id = lr.field_id where f.sample_id = $1 and lr.current order by lr.id`,
    [sampleId],
  );
  return r.map((x) => x.id);
}

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

export type FieldRemoval =
  | { ok: true; field: { id: string; name: string; sampleId: string; status: string; version: number }; objectKeys: string[] }
  | { ok: false; reason: 'not_found' }
  | { ok: false; reason: 'approved' | 'processing'; name: string }
  | { ok: false; reason: 'stale'; name: string; version: number }
  | { ok: false; reason: 'released'; name: string; releaseVersions: number[] };

/** Anything with pg's `query(text, params)`: the pool, or a client inside a transaction. */
interface Queryable { query(text: string, params: unknown[]): Promise<{ rows: unknown[] }> }

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

function emptyHistogram(spec: { lowNm: number; highNm: number; bins: number }): Histogram & { counts: number[] } {
  return { lowNm: spec.lowNm, binWidthNm: (spec.highNm - spec.lowNm) / spec.bins, counts: new Array(spec.bins).fill(0), below: 0, above: 0 };
}

function addToHistogram(h: { counts: number[]; below: number; above: number }, bucket: number, n: number) {
  if (bucket <= 0) h.below += n;
  else if (bucket > h.counts.length) h.above += n;
  else h.counts[bucket - 1] += n;
}

/**
 * All per-sample aggregates over the vesicle rows of `linkRunIds`: counts, marker-positive fractions
 * with Wilson intervals, phenotype combinations, diameter/height histograms (overall and per
 * phenotype) and a per-field breakdown: FRE/TRE of the registration each released link run was made with
 * (of the latest registration in the live preview, `release` null).
 */
export async function getSampleResults(
  db: Db,
  sample: SampleContext,
  selection: { source: ResultSource; release: ReleaseInfo | null; linkRunIds: string[] },
): Promise<SampleResults> {
  const panel = await getPanel(db, sample.studyId);
  const ids = selection.linkRunIds;
  const D = DIAMETER_BINS;
  const H = HEIGHT_BINS;
  const [[quartiles], phen, hist, fieldRows] = await Promise.all([
    // quartiles need the values themselves; everything else comes from the link runs' summaries
    rows<{ dq: number[] | null; hq: number[] | null }>(
      db,
      `select percentile_cont(array[0.25, 0.5, 0.75]) within group (order by diameter_nm) as dq,
              percentile_cont(array[0.25, 0.5, 0.75]) within group (order by height_nm) as hq
         from vesicles where link_run_id = any($1::uuid[])`,
      [ids],
    ),
    rows<{ bits: number; n: number }>(
      db,
      `select marker_bits as bits, sum(n)::int as n from link_run_phenotypes where link_run_id = any($1::uuid[]) group by 1 order by 2 desc, 1`,
      [ids],
    ),
    rows<{ m: 'diameter_nm' | 'height_nm'; bits: number; b: number; n: number }>(
      db,
      `select measure as m, marker_bits as bits, bucket as b, sum(n)::int as n
         from link_run_histograms where link_run_id = any($1::uuid[]) group by 1, 2, 3`,
      [ids],
    ),
    // One row per field with a link run in the selection. For a release, the registration is the one that
    // run was made with and the status is the field's as of the release (its run's last review by then; every
    // released field was approved, createRelease sees to it), so re-registering or sending a field back later
    // never changes a released table. The live preview shows the field's latest registration and status.
    rows<Record<string, unknown>>(
      db,
      `select f.id as "fieldId", f.name,
              case when $3::timestamptz is null then f.status::text
                   else coalesce((select case fr.decision when 'approved' then 'approved' else 'registered' end
                                    from field_reviews fr
                                   where fr.link_run_id = lr.id and fr.reviewed_at <= $3::timestamptz
                                   order by fr.reviewed_at desc limit 1), 'approved') end as status,
              f.afm_pixel_nm as "afmPixelNm", f.fl_pixel_nm as "flPixelNm",
              r.fre_nm as "freNm", r.tre_nm as "treNm", r.version as "registrationVersion", r.nb as "nbFiducials",
              coalesce(v.n, 0)::int as n${panel.map((c) => `, coalesce(v.p${c.channelIndex}, 0)::int as p${c.channelIndex}`).join('')}
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
         left join (
           select lr.field_id, sum(p.n)::int as n${panel.length ? ', ' + markerSumColumns(panel, 'p') : ''}
             from link_runs lr join link_run_phenotypes p on p.link_run_id = lr.id
            where lr.id = any($2::uuid[]) group by lr.field_id
         ) v on v.field_id = f.id
        where f.sample_id = $1
        order by f.name, f.id`,
      [sample.id, ids, selection.release?.releasedAt ?? null],
    ),
  ]);

  const n = phen.reduce((t, p) => t + p.n, 0);
  const markerNames = panel.map((c) => c.marker);
  const markers: MarkerFraction[] = panel.map((c) => ({
    channelIndex: c.channelIndex,
    marker: c.marker,
    ...estimateProportion(phen.reduce((t, p) => t + (p.bits & channelBit(c.channelIndex) ? p.n : 0), 0), n),
  }));
  const phenotypes: PhenotypeCount[] = phen.map((p) => ({ bits: p.bits, label: phenotypeLabel(p.bits, markerNames), ...estimateProportion(p.n, n) }));

  const diameter = emptyHistogram(D);
  const height = emptyHistogram(H);
  const diameterBy: Record<string, ReturnType<typeof emptyHistogram>> = {};
  const heightBy: Record<string, ReturnType<typeof emptyHistogram>> = {};
  for (const r of hist) {
    const [overall, by, spec] = r.m === 'diameter_nm' ? [diameter, diameterBy, D] : [height, heightBy, H];
    addToHistogram(overall, r.b, r.n);
    addToHistogram((by[r.bits] ??= emptyHistogram(spec)), r.b, r.n);
  }
  const quart = (q: unknown) => {
    const a = q as number[] | null;
    return { q1Nm: a?.[0] ?? null, medianNm: a?.[1] ?? null, q3Nm: a?.[2] ?? null };
  };
  const fields: FieldBreakdown[] = fieldRows.map((f) => ({
    fieldId: f.fieldId as string,
    name: f.name as string,
    status: f.status as string,
    vesicles: f.n as number,
    positives: panel.map((c) => f[`p${c.channelIndex}`] as number),
    freNm: (f.freNm as number | null) ?? null,
    treNm: (f.treNm as number | null) ?? null,
    nbFiducials: (f.nbFiducials as number | null) ?? null,
    registrationVersion: (f.registrationVersion as number | null) ?? null,
    afmPixelNm: (f.afmPixelNm as number | null) ?? null,
    flPixelNm: (f.flPixelNm as number | null) ?? null,
  }));
  return {
    sample: { id: sample.id, code: sample.code, groupLabel: sample.groupLabel, studyId: sample.studyId, studyName: sample.studyName, controlKind: sample.controlKind },
    source: selection.source,
    release: selection.release ? { id: selection.release.id, version: selection.release.version, releasedAt: selection.release.releasedAt } : null,
    panel,
    // every link run of the selection belongs to one of these fields (they are the sample's, with a run in it)
    fieldsAnalysed: fieldRows.length,
    vesicles: n,
    markers,
    phenotypes,
    diameter: { ...quart(quartiles.dq), histogram: diameter, byPhenotype: diameterBy },
    height: { ...quart(quartiles.hq), histogram: height, byPhenotype: heightBy },
    fields,
  };
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
 * SQL (a CTE body) selecting `sample_id, code, group_label, version, link_run_id` for every sample of
 * study $1: its latest release's link runs, or its current link runs.
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

function median(sorted: number[]): number | null {
  if (sorted.length === 0) return null;
  const m = sorted.length >> 1;
  return sorted.length % 2 ? sorted[m] : (sorted[m - 1] + sorted[m]) / 2;
}

/** Every vesicle's diameter and height of a small group (callers check the group has ≤ MAX_RANK_SAMPLE). */
async function groupSizes(db: Db, studyId: string, source: ResultSource, group: string) {
  return rows<{ d: number; h: number }>(
    db,
    `with sel as (${selectionCte(source)})
     select v.diameter_nm as d, v.height_nm as h
       from sel join vesicles v on v.link_run_id = sel.link_run_id
      where sel.group_label = $2`,
    [studyId, group],
  );
}

/** Fine bins of one measure for both groups from the summaries, sorted by value (see SIZE_BINS_PER_NM). */
async function groupSizeBins(
  db: Db, studyId: string, source: ResultSource, groupA: string, groupB: string, measure: 'diameter_nm' | 'height_nm',
): Promise<BinnedPair[]> {
  const r = await rows<{ bin: number; a: number; b: number }>(
    db,
    `with sel as (${selectionCte(source)})
     select b.bin,
            coalesce(sum(b.n) filter (where sel.group_label = $2), 0)::int as a,
            coalesce(sum(b.n) filter (where sel.group_label = $3), 0)::int as b
       from sel join link_run_size_bins b on b.link_run_id = sel.link_run_id and b.measure = $4
      where sel.group_label in ($2, $3)
      group by 1 order by 1`,
    [studyId, groupA, groupB, measure],
  );
  return r.map((x) => ({ value: x.bin / SIZE_BINS_PER_NM[measure], countA: x.a, countB: x.b }));
}

/**
 * Per-sample marker-positive fractions (Wilson intervals) for all samples of a study that have data
 * in `source`, grouped by group label; and, when two groups are named, a per-marker comparison of
 * the pooled fractions (Fisher or chi-square, Newcombe difference, Benjamini–Hochberg across markers)
 * and Mann–Whitney tests of diameter and height.
 */
export async function getStudyComparison(
  db: Db,
  study: { id: string; name: string },
  source: ResultSource,
  groupA: string | null,
  groupB: string | null,
): Promise<StudyComparison> {
  const panel = await getPanel(db, study.id);
  const perSample = await rows<Record<string, unknown>>(
    db,
    `with sel as (${selectionCte(source)}),
          agg as (
            select runs.link_run_id, coalesce(sum(p.n), 0)::int as n${panel.length ? ', ' + markerSumColumns(panel, 'p') : ''}
              from (select distinct link_run_id from sel) runs
              left join link_run_phenotypes p on p.link_run_id = runs.link_run_id
             group by runs.link_run_id)
     select sel.sample_id as "sampleId", sel.code, sel.group_label as "groupLabel", max(sel.version) as "releaseVersion",
            sum(agg.n)::int as n${panel.map((c) => `, sum(agg.p${c.channelIndex})::int as p${c.channelIndex}`).join('')}
       from sel join agg on agg.link_run_id = sel.link_run_id
      group by sel.sample_id, sel.code, sel.group_label
      order by sel.group_label, sel.code`,
    [study.id],
  );
  const samples: SampleMarkerRow[] = perSample.map((r) => ({
    sampleId: r.sampleId as string,
    code: r.code as string,
    groupLabel: r.groupLabel as string,
    releaseVersion: (r.releaseVersion as number | null) ?? null,
    vesicles: r.n as number,
    markers: panel.map((c) => ({ channelIndex: c.channelIndex, marker: c.marker, ...estimateProportion(r[`p${c.channelIndex}`] as number, r.n as number) })),
  }));
  const groups = [...new Set(samples.map((s) => s.groupLabel))].sort();

  let markerComparisons: MarkerComparison[] = [];
  let sizeComparisons: SizeComparison[] = [];
  if (groupA !== null && groupB !== null) {
    // pooled counts per group (vesicles of all samples of the group)
    const pool = (g: string) => {
      const inGroup = samples.filter((s) => s.groupLabel === g);
      const total = inGroup.reduce((t, s) => t + s.vesicles, 0);
      return { total, positives: panel.map((_, i) => inGroup.reduce((t, s) => t + s.markers[i].count, 0)) };
    };
    const a = pool(groupA);
    const b = pool(groupB);
    const raw = panel.map((c, i) => {
      const ea = estimateProportion(a.positives[i], a.total);
      const eb = estimateProportion(b.positives[i], b.total);
      if (a.total === 0 || b.total === 0) {
        return { marker: c.marker, channelIndex: c.channelIndex, a: ea, b: eb, test: null, pValue: null, difference: null, differenceLower: null, differenceUpper: null };
      }
      const cmp = compareProportions(a.positives[i], a.total, b.positives[i], b.total);
      return {
        marker: c.marker, channelIndex: c.channelIndex, a: ea, b: eb, test: cmp.test, pValue: cmp.pValue,
        difference: cmp.difference, differenceLower: cmp.differenceLower, differenceUpper: cmp.differenceUpper,
      };
    });
    const tested = raw.filter((r) => r.pValue !== null);
    const adjusted = benjaminiHochberg(tested.map((r) => r.pValue as number));
    markerComparisons = raw.map((r) => ({ ...r, pAdjusted: r.pValue === null ? null : adjusted[tested.indexOf(r)] }));

    if (a.total > MAX_RANK_SAMPLE || b.total > MAX_RANK_SAMPLE) {
      // every vesicle, binned: U is exact for the binned values (ties count ½, tie-corrected variance)
      // one query per measure: they run side by side on two pool connections
      const measures = ['diameter_nm', 'height_nm'] as const;
      const binsBy = await Promise.all(measures.map((m) => groupSizeBins(db, study.id, source, groupA, groupB, m)));
      sizeComparisons = measures.map((measure, i) => {
        const bins = binsBy[i];
        const mw = a.total && b.total ? mannWhitneyUBinned(bins) : null;
        return {
          measure, nA: a.total, nB: b.total, usedA: a.total, usedB: b.total,
          medianA: binnedMedian(bins, 'countA'), medianB: binnedMedian(bins, 'countB'),
          uStatistic: mw?.uStatistic ?? null, pValue: mw?.pValue ?? null, method: mw?.method ?? null,
        };
      });
      return { study, source, panel, groups, samples, groupA, groupB, markerComparisons, sizeComparisons };
    }
    const [va, vb] = await Promise.all([
      a.total ? groupSizes(db, study.id, source, groupA) : Promise.resolve([]),
      b.total ? groupSizes(db, study.id, source, groupB) : Promise.resolve([]),
    ]);
    sizeComparisons = (['diameter_nm', 'height_nm'] as const).map((measure) => {
      const key = measure === 'diameter_nm' ? 'd' : 'h';
      const xa = va.map((r) => r[key]).sort((p, q) => p - q);
      const xb = vb.map((r) => r[key]).sort((p, q) => p - q);
      const mw = xa.length && xb.length ? mannWhitneyU(xa, xb) : null;
      return {
        measure, nA: a.total, nB: b.total, usedA: xa.length, usedB: xb.length, medianA: median(xa), medianB: median(xb),
        uStatistic: mw?.uStatistic ?? null, pValue: mw?.pValue ?? null, method: mw?.method ?? null,
      };
    });
  }
  return { study, source, panel, groups, samples, groupA, groupB, markerComparisons, sizeComparisons };
}

/** Group labels of the samples that have data in `source` (cheap: no vesicle rows read). */
export async function listResultGroups(db: Db, studyId: string, source: ResultSource): Promise<string[]> {
  const r = await rows<{ g: string }>(
    db,
    `select distinct s.group_label as g from samples s where s.study_id = $1 and exists (${
      source === 'released'
        ? 'select 1 from releases r where r.sample_id = s.id'
        : 'select 1 from fields f join link_runs lr on lr.field_id = f.id and lr.current where f.sample_id = s.id'
    }) order by 1`,
    [studyId],
  );
  return r.map((x) => x.g);
}

/** Samples with at least one release in the studies the user belongs to (admins: all), newest first. */
export async function listReleasedSamples(db: Db, user: SessionUser) {
  return rows<{ sampleId: string; code: string; groupLabel: string; studyId: string; studyName: string; version: number; releasedAt: Date }>(
    db,
    `select s.id as "sampleId", s.code, s.group_label as "groupLabel", st.id as "studyId", st.name as "studyName",
            r.version, r.released_at as "releasedAt"
       from samples s
       join studies st on st.id = s.study_id
       join lateral (select version, released_at from releases where sample_id = s.id order by version desc limit 1) r on true
      where $2 or exists (select 1 from study_members m where m.study_id = st.id and m.user_id = $1)
      order by st.name, s.code`,
    [user.id, user.role === 'admin'],
  );
}

/** One vesicle row of the per-vesicle export. */
export interface VesicleExportRow {
  id: number;
  fieldId: string;
  linkRunId: string;
  index: number;
  heightNm: number;
  diameterNm: number;
  volumeNm3: number;
  areaNm2: number;
  markerBits: number;
  intensities: (number | null)[];
}

/**
 * Pages through the vesicle rows of `linkRunIds` by keyset (link run, then id), `pageSize` rows per
 * query, so an export of any size holds one page in memory.
 */
export async function* pageVesicles(db: Db, linkRunIds: string[], pageSize = 5000): AsyncGenerator<VesicleExportRow[]> {
  for (const runId of [...linkRunIds].sort()) {
    let after = 0;
    for (;;) {
      const page = await rows<VesicleExportRow & { id: string }>(
        db,
        `select id, field_id as "fieldId", link_run_id as "linkRunId", index, height_nm as "heightNm", diameter_nm as "diameterNm",
                volume_nm3 as "volumeNm3", area_nm2 as "areaNm2", marker_bits as "markerBits",
                coalesce((select jsonb_agg(m->'intensity') from jsonb_array_elements(markers) m), '[]'::jsonb) as intensities
           from vesicles where link_run_id = $1 and id > $2 order by id limit $3`,
        [runId, after, pageSize],
      );
      if (page.length === 0) break;
      yield page.map((r) => ({ ...r, id: Number(r.id) }));
      after = Number(page[page.length - 1].id);
      if (page.length < pageSize) break;
    }
  }
}

/** What the study recorded, for the reporting checklist (see src/lib/reporting/misevChecklist.ts). */
export async function getChecklistInput(db: Db, studyId: string) {
  const [panel, samples, [fieldAgg], runs, [reg], [counts]] = await Promise.all([
    rows<{ channelIndex: number; marker: string; antibodyClone: string; fluorophore: string; excitationNm: number | null; emissionNm: number | null }>(
      db,
      `select channel_index as "channelIndex", marker, antibody_clone as "antibodyClone", fluorophore,
              excitation_nm as "excitationNm", emission_nm as "emissionNm"
         from marker_channels where study_id = $1 order by channel_index`,
      [studyId],
    ),
    rows<{ code: string; controlKind: string; source: string; isolationMethod: string; substrate: string; dilution: string }>(
      db,
      `select code, control_kind as "controlKind", source, isolation_method as "isolationMethod", substrate, dilution
         from samples where study_id = $1 order by code`,
      [studyId],
    ),
    rows<Record<string, unknown>>(
      db,
      `select count(*)::int as fields,
              array_remove(array_agg(distinct f.imaging_medium::text), null) as media,
              array_remove(array_agg(distinct nullif(f.scan_mode, '')), null) as "scanModes",
              count(f.afm_pixel_nm)::int as "withAfmPixel", count(f.fl_pixel_nm)::int as "withFlPixel",
              count(f.tip_radius_nm)::int as "withTipRadius", count(f.objective_na)::int as "withNa",
              count(f.exposure_ms)::int as "withExposure", count(*) filter (where jsonb_array_length(f.channel_emission_nm) > 0)::int as "withEmission",
              min(f.afm_pixel_nm) as "afmPixelMinNm", max(f.afm_pixel_nm) as "afmPixelMaxNm",
              min(f.fl_pixel_nm) as "flPixelMinNm", max(f.fl_pixel_nm) as "flPixelMaxNm"
         from fields f join samples s on s.id = f.sample_id where s.study_id = $1`,
      [studyId],
    ),
    rows<{ settings: Record<string, unknown> }>(
      db,
      `select lr.settings from link_runs lr join fields f on f.id = lr.field_id join samples s on s.id = f.sample_id
        where s.study_id = $1 and lr.current order by lr.created_at desc limit 200`,
      [studyId],
    ),
    rows<{ registered: number; minFiducials: number | null; maxFreNm: number | null; withTre: number }>(
      db,
      `select count(*)::int as registered, min(nb)::int as "minFiducials", max(fre_nm) as "maxFreNm", count(tre_nm)::int as "withTre"
         from (select distinct on (r.field_id) r.field_id, jsonb_array_length(r.pairs) as nb, r.fre_nm, r.tre_nm
                 from registrations r join fields f on f.id = r.field_id join samples s on s.id = f.sample_id
                where s.study_id = $1 order by r.field_id, r.version desc) latest`,
      [studyId],
    ),
    rows<{ released: number }>(
      db,
      `select count(distinct r.sample_id)::int as released from releases r join samples s on s.id = r.sample_id where s.study_id = $1`,
      [studyId],
    ),
  ]);
  return {
    panel,
    samples,
    fields: fieldAgg as {
      fields: number; media: string[]; scanModes: string[]; withAfmPixel: number; withFlPixel: number; withTipRadius: number;
      withNa: number; withExposure: number; withEmission: number; afmPixelMinNm: number | null; afmPixelMaxNm: number | null;
      flPixelMinNm: number | null; flPixelMaxNm: number | null;
    },
    linkSettings: runs.map((r) => r.settings),
    registrations: reg,
    releasedSamples: counts.released,
  };
}
