/**
 * Per-link-run summaries of the vesicle rows (tables link_run_phenotypes, link_run_marker_counts,
 * link_run_histograms, link_run_size_bins). A link run's vesicles are written once and never change (a re-analysis writes
 * a new run), so summaries built in the same transaction stay exact; the study-wide dashboard reads
 * them instead of every vesicle of the study.
 */
import { sql } from 'drizzle-orm';
import type { Db } from '../client';

/** Dashboard histogram ranges: fixed so that samples and releases can be compared bin by bin. */
export const DIAMETER_BINS = { lowNm: 0, highNm: 500, bins: 50 } as const;
export const HEIGHT_BINS = { lowNm: 0, highNm: 100, bins: 50 } as const;

/**
 * Resolution of the rank-sum bins: a value v is kept as round(v × binsPerNm). 2 per nm for diameters
 * (below the AFM pixel, ≥ 1 nm in practice: common practice), 10 per nm for heights (0.1 nm, about
 * the height noise of an AFM scan: common practice).
 */
export const SIZE_BINS_PER_NM = { diameter_nm: 2, height_nm: 10 } as const;

/** Anything with Drizzle's `execute`: the database or a transaction. */
export type SqlExecutor = Pick<Db, 'execute'>;

// Bin expressions shared by every writer. NaN sorts above every number in PostgreSQL and
// width_bucket refuses it, so it goes to the "above" bucket; the clamp keeps absurd values from
// overflowing integer and failing the linking transaction.
const bucket = (col: string, b: { lowNm: number; highNm: number; bins: number }) =>
  `case when ${col} = 'NaN' then ${b.bins + 1} else width_bucket(${col}, ${b.lowNm}, ${b.highNm}, ${b.bins}) end`;
const fineBin = (col: 'diameter_nm' | 'height_nm') =>
  `least(greatest(round(${col}::float8 * ${SIZE_BINS_PER_NM[col]}), -2000000000), 2000000000)::int`;

// A vesicle's markers jsonb has one entry per channel of its run, so the run's full channel mask
// follows from the row itself (no join, and the migration backfill can use the same statements).
const allChannels = `((1 << jsonb_array_length(markers)) - 1)`;
/** Condition: the vesicle was measured (inside the frame) in every channel of its run. */
export const MEASURED_EVERYWHERE = `(measured_bits & ${allChannels}) = ${allChannels}`;

/**
 * SQL statements filling the four summary tables from the vesicles matched by `where` (a condition
 * on the `vesicles` table, e.g. `link_run_id = $1`). drizzle/0003_link_run_summaries.sql backfilled existing runs with the statements of that time;
 * drizzle/0007 redid the phenotypes and added the marker counts with these (where `true`).
 */
export function summaryStatements(where: string): string[] {
  return [
    // phenotypes: only vesicles with a call in every channel (one outside a frame has no phenotype)
    `insert into link_run_phenotypes (link_run_id, marker_bits, n)
     select link_run_id, marker_bits, count(*) from vesicles where (${where}) and ${MEASURED_EVERYWHERE} group by 1, 2`,
    // per channel: measured (inside that channel's frame) and positive there; channels nobody was measured in get zeros
    `insert into link_run_marker_counts (link_run_id, channel_index, n_measured, n_positive)
     select link_run_id, c,
            count(*) filter (where measured_bits & (1 << c) <> 0)::int,
            count(*) filter (where measured_bits & marker_bits & (1 << c) <> 0)::int
       from vesicles cross join lateral generate_series(0, jsonb_array_length(markers) - 1) as c
      where ${where} group by 1, 2`,
    `insert into link_run_histograms (link_run_id, measure, marker_bits, bucket, n)
     select link_run_id, 'diameter_nm'::size_measure, marker_bits, ${bucket('diameter_nm', DIAMETER_BINS)}, count(*) from vesicles where ${where} group by 1, 3, 4
     union all
     select link_run_id, 'height_nm'::size_measure, marker_bits, ${bucket('height_nm', HEIGHT_BINS)}, count(*) from vesicles where ${where} group by 1, 3, 4`,
    `insert into link_run_size_bins (link_run_id, measure, bin, n)
     select link_run_id, 'diameter_nm'::size_measure, ${fineBin('diameter_nm')}, count(*) from vesicles where ${where} group by 1, 3
     union all
     select link_run_id, 'height_nm'::size_measure, ${fineBin('height_nm')}, count(*) from vesicles where ${where} group by 1, 3`,
  ];
}

/**
 * Writes the summaries of one link run from its vesicle rows. Call it once, after the run's
 * vesicles are inserted and inside the same transaction (a second call fails on the primary keys).
 *
 * @param db - the transaction (or database) that wrote the vesicles
 * @param linkRunId - the link run's id
 * @param nbChannels - the run's channel count: channels without any vesicle still get a
 *   link_run_marker_counts row (0 measured, 0 positive), so readers never meet a missing channel
 */
export async function summariseLinkRun(db: SqlExecutor, linkRunId: string, nbChannels = 0): Promise<void> {
  if (!/^[0-9a-f-]{36}$/i.test(linkRunId)) throw new TypeError(`linkRunId must be a uuid; got ${JSON.stringify(linkRunId)}`);
  if (!Number.isInteger(nbChannels) || nbChannels < 0 || nbChannels > 30) throw new TypeError(`nbChannels must be an integer 0..30; got ${nbChannels}`);
  for (const text of summaryStatements(`link_run_id = '${linkRunId}'::uuid`)) await db.execute(sql.raw(text));
  if (nbChannels > 0) {
    await db.execute(sql.raw(`insert into link_run_marker_counts (link_run_id, channel_index, n_measured, n_positive)
      select '${linkRunId}'::uuid, c, 0, 0 from generate_series(0, ${nbChannels - 1}) as c on conflict do nothing`));
  }
}

export { binnedMedian, mannWhitneyUBinned, type BinnedPair } from '../../analysis/stats/mannWhitneyUBinned';
