import { distributions } from './distributions';

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
