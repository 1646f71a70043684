/**
 * Per-link-run summaries of the vesicle rows (tables link_run_phenotypes, link_run_histograms,
 * link_run_size_bins). A link run's vesicles are written once and never change (a re-analysis writes
 * a new run), so summaries built in the same transaction stay exact; the study-wide dashboard reads
 * them instead of every vesicle of the study.
 */
import { sql } from 'drizzle-orm';
import type { Db } from '../client';
import { distributions } from '../../analysis/stats/distributions';

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

/**
 * SQL statements filling the three summary tables from the vesicles matched by `where` (a condition
 * on the `vesicles` table, e.g. `link_run_id = $1`). drizzle/0003_link_run_summaries.sql backfills existing runs with these statements (where `true`).
 */
export function summaryStatements(where: string): string[] {
  return [
    `insert into link_run_phenotypes (link_run_id, marker_bits, n)
     select link_run_id, marker_bits, count(*) from vesicles where ${where} group by 1, 2`,
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
 */
export async function summariseLinkRun(db: SqlExecutor, linkRunId: string): Promise<void> {
  if (!/^[0-9a-f-]{36}$/i.test(linkRunId)) throw new TypeError(`linkRunId must be a uuid; got ${JSON.stringify(linkRunId)}`);
  for (const text of summaryStatements(`link_run_id = '${linkRunId}'::uuid`)) await db.execute(sql.raw(text));
}

/** One fine bin of both groups: its value and how many vesicles of each group fall in it. */
export interface BinnedPair {
  readonly value: number;
  readonly countA: number;
  readonly countB: number;
}

/** Result of {@link mannWhitneyUBinned}: the fields of mannWhitneyU's result the dashboard uses. */
export interface MannWhitneyUBinnedResult {
  readonly uStatistic: number;
  readonly pValue: number;
  readonly method: 'normal';
  readonly z: number;
  readonly nA: number;
  readonly nB: number;
}

/**
 * Median of one group's binned values (the mean of the two middle ones for an even count).
 *
 * @param bins - bins sorted by ascending value
 * @param key - which group
 * @returns the median in the bins' unit, or null when the group is empty
 */
export function binnedMedian(bins: readonly BinnedPair[], key: 'countA' | 'countB'): number | null {
  const total = bins.reduce((t, b) => t + b[key], 0);
  if (total === 0) return null;
  const at = (rank: number) => {
    let seen = 0;
    for (const b of bins) {
      seen += b[key];
      if (seen > rank) return b.value;
    }
    return bins[bins.length - 1].value;
  };
  return (at((total - 1) >> 1) + at(total >> 1)) / 2;
}

/**
 * Two-sided Mann–Whitney U test on binned values, with mid-ranks for each bin (ties count ½) and
 * the tie-corrected variance. It gives exactly what `mannWhitneyU(a, b, { exact: false })` gives on
 * the values replaced by their bin values, in O(bins) instead of sorting every value.
 *
 * @param bins - bins sorted by ascending value, with the count of each group
 * @returns U for group A, the normal-approximation p-value (continuity-corrected) and z
 * @throws RangeError when a group is empty or bins are not sorted
 * @see H. B. Mann, D. R. Whitney, Ann. Math. Stat. 18(1), 1947; M. Hollander, D. A. Wolfe, Nonparametric Statistical Methods, 1973
 */
export function mannWhitneyUBinned(bins: readonly BinnedPair[]): MannWhitneyUBinnedResult {
  let nA = 0;
  let nB = 0;
  let u = 0;
  let tieTerm = 0;
  for (let k = 0; k < bins.length; k++) {
    const { value, countA, countB } = bins[k];
    if (k > 0 && !(value > bins[k - 1].value)) throw new RangeError(`bins must be sorted by strictly ascending value; bin ${k} is ${value}`);
    // pairs (a, b) with b in a lower bin count 1, in the same bin ½
    u += countA * (nB + countB / 2);
    const t = countA + countB;
    tieTerm += t * t * t - t;
    nA += countA;
    nB += countB;
  }
  if (nA === 0 || nB === 0) throw new RangeError(`both groups need ≥ 1 value; got ${nA} and ${nB}`);
  const n = nA + nB;
  // same normal approximation as mannWhitneyU (two-sided, continuity correction 0.5)
  const { normalCdf } = distributions();
  const mean = (nA * nB) / 2;
  const sd = Math.sqrt(((nA * nB) / 12) * (n + 1 - tieTerm / (n * (n - 1))));
  const diff = u - mean;
  const z = sd > 0 ? (diff - Math.sign(diff) * 0.5) / sd : 0;
  const pValue = Math.min(1, 2 * Math.min(normalCdf(z), 1 - normalCdf(z)));
  return { uStatistic: u, pValue, method: 'normal', z, nA, nB };
}
