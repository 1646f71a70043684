import { distributions } from './distributions';
import type { Alternative } from './types';

/** Options of {@link mannWhitneyU}. */
export interface MannWhitneyUOptions {
  /**
   * 'greater' asks whether values in `a` tend to be larger than in `b`.
   * @default 'two-sided'
   */
  readonly alternative?: Alternative;
  /**
   * Exact null distribution: 'auto' uses it when there are no ties and n_a + n_b ≤ 50.
   * @default 'auto'
   */
  readonly exact?: 'auto' | boolean;
  /**
   * Continuity correction (±0.5) in the normal approximation.
   * @default true
   */
  readonly continuityCorrection?: boolean;
}

/** Result of {@link mannWhitneyU}. */
export interface MannWhitneyUResult {
  /** U for `a`: pairs (a_i, b_j) with a_i > b_j, ties counting ½ (= rank sum of a − n_a(n_a + 1)/2). */
  readonly uStatistic: number;
  readonly pValue: number;
  readonly method: 'exact' | 'normal';
  /** Standardised statistic of the normal approximation (null for the exact method). */
  readonly z: number | null;
  /** True when tied values were found (the variance is then tie-corrected). */
  readonly hasTies: boolean;
  readonly nA: number;
  readonly nB: number;
}

/** Null distribution of U without ties: coefficients of the Gaussian binomial [m+n choose m], as probabilities. */
function exactUDistribution(m: number, n: number): number[] {
  const size = m * n + 1;
  const c = new Array<number>(size).fill(0);
  c[0] = 1;
  // ∏_{i=1..m} (1 − q^{n+i}) / (1 − q^i); integer counts stay below 2^53 for m + n ≤ 50
  for (let i = 1; i <= m; i++) {
    for (let k = size - 1; k >= n + i; k--) c[k] -= c[k - n - i];
    for (let k = i; k < size; k++) c[k] += c[k - i];
  }
  const total = c.reduce((s, v) => s + v, 0);
  return c.map((v) => v / total);
}

/**
 * Mann–Whitney U (Wilcoxon rank-sum) test for two independent samples, e.g. vesicle heights (nm) of
 * marker-positive vs negative vesicles. Mid-ranks for ties with the tie-corrected variance; exact null
 * distribution for small samples without ties, else the normal approximation. Written here because
 * simple-statistics and jstat have no rank-sum test with ties and exact p-values.
 *
 * @param a - first sample (any unit, same as b)
 * @param b - second sample
 * @param options - see {@link MannWhitneyUOptions}
 * @returns U for `a`, the p-value and how it was computed
 * @throws RangeError when a sample is empty or holds non-finite values
 * @see H. B. Mann, D. R. Whitney, Ann. Math. Stat. 18(1), 1947; M. Hollander, D. A. Wolfe, Nonparametric Statistical Methods, 1973
 */
export function mannWhitneyU(a: readonly number[], b: readonly number[], options: MannWhitneyUOptions = {}): MannWhitneyUResult {
  const { alternative = 'two-sided', exact = 'auto', continuityCorrection = true } = options;
  if (a.length === 0 || b.length === 0 || ![...a, ...b].every(Number.isFinite)) {
    throw new RangeError(`both samples need ≥ 1 finite value; got ${a.length} and ${b.length} values`);
  }
  const nA = a.length;
  const nB = b.length;
  const n = nA + nB;

  // mid-ranks
  const all = [...a.map((v) => ({ v, fromA: true })), ...b.map((v) => ({ v, fromA: false }))].sort((x, y) => x.v - y.v);
  let rankSumA = 0;
  let tieTerm = 0;
  for (let i = 0; i < n; ) {
    let j = i;
    while (j + 1 < n && all[j + 1].v === all[i].v) j++;
    const t = j - i + 1;
    const midRank = (i + j + 2) / 2;
    for (let k = i; k <= j; k++) if (all[k].fromA) rankSumA += midRank;
    tieTerm += t * t * t - t;
    i = j + 1;
  }
  const u = rankSumA - (nA * (nA + 1)) / 2;
  const hasTies = tieTerm > 0;
  const useExact = exact === 'auto' ? !hasTies && n <= 50 : exact;
  if (useExact && hasTies) throw new RangeError('the exact distribution here assumes no ties; use exact: false');
  if (useExact && n > 50) throw new RangeError(`exact p-values are limited to n_a + n_b ≤ 50; got ${n}`);

  if (useExact) {
    const dist = exactUDistribution(nA, nB);
    const k = Math.round(u);
    const lower = dist.slice(0, k + 1).reduce((s, p) => s + p, 0); // P(U ≤ u)
    const upper = dist.slice(k).reduce((s, p) => s + p, 0); // P(U ≥ u)
    const pValue = alternative === 'greater' ? upper : alternative === 'less' ? lower : Math.min(1, 2 * Math.min(lower, upper));
    return { uStatistic: u, pValue, method: 'exact', z: null, hasTies, nA, nB };
  }

  // normal approximation with tie-corrected variance
  const { normalCdf } = distributions();
  const mean = (nA * nB) / 2;
  const sd = Math.sqrt(((nA * nB) / 12) * (n + 1 - tieTerm / (n * (n - 1))));
  const diff = u - mean;
  const cc = continuityCorrection ? 0.5 : 0;
  const shift = alternative === 'greater' ? cc : alternative === 'less' ? -cc : Math.sign(diff) * cc;
  const z = sd > 0 ? (diff - shift) / sd : 0;
  const pValue =
    alternative === 'greater' ? 1 - normalCdf(z) : alternative === 'less' ? normalCdf(z) : Math.min(1, 2 * Math.min(normalCdf(z), 1 - normalCdf(z)));
  return { uStatistic: u, pValue, method: 'normal', z, hasTies, nA, nB };
}
