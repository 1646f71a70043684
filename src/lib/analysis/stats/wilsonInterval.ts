import { distributions } from './distributions';

/** Result of {@link wilsonInterval}. */
export interface WilsonIntervalResult {
  /** k / n. */
  readonly proportion: number;
  readonly lower: number;
  readonly upper: number;
  readonly k: number;
  readonly n: number;
  readonly confidence: number;
}

/**
 * Wilson score interval for a binomial proportion (no continuity correction; Newcombe's method 3).
 * Behaves well at 0/n and n/n, unlike the Wald interval.
 *
 * @param k - number of successes (e.g. marker-positive vesicles), integer 0…n
 * @param n - number of trials (vesicles counted), integer ≥ 1
 * @param confidence - two-sided confidence level in (0, 1)
 * @returns the proportion and its interval
 * @throws RangeError for non-integer or out-of-range counts
 * @see E. B. Wilson, J. Am. Stat. Assoc. 22, 1927; R. G. Newcombe, Stat. Med. 17:857–872, 1998
 */
export function wilsonInterval(k: number, n: number, confidence = 0.95): WilsonIntervalResult {
  if (!Number.isInteger(k) || !Number.isInteger(n) || n < 1 || k < 0 || k > n) {
    throw new RangeError(`need integers 0 ≤ k ≤ n, n ≥ 1; got k = ${k}, n = ${n}`);
  }
  if (!(confidence > 0 && confidence < 1)) throw new RangeError(`confidence must be in (0, 1); got ${confidence}`);
  const z = distributions().normalQuantile(1 - (1 - confidence) / 2);
  const p = k / n;
  const z2 = z * z;
  const centre = p + z2 / (2 * n);
  const half = z * Math.sqrt((p * (1 - p)) / n + z2 / (4 * n * n));
  const denom = 1 + z2 / n;
  // at k = 0 or k = n the bound is exactly 0 or 1; avoid round-off like 1e-17
  return {
    proportion: p,
    lower: k === 0 ? 0 : (centre - half) / denom,
    upper: k === n ? 1 : (centre + half) / denom,
    k,
    n,
    confidence,
  };
}
