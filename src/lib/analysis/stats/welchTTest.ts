import { mean, sampleVariance } from 'simple-statistics';
import { distributions } from './distributions';

/** Result of {@link welchTTest}. */
export interface WelchTTestResult {
  readonly meanA: number;
  readonly meanB: number;
  /** meanA − meanB. */
  readonly difference: number;
  /** Confidence interval of the difference (Welch–Satterthwaite t quantile). */
  readonly lower: number;
  readonly upper: number;
  /** t statistic; ±Infinity when both groups have no spread but different means. */
  readonly t: number;
  /** Welch–Satterthwaite degrees of freedom (null when both groups have no spread). */
  readonly df: number | null;
  /** Two-sided p-value. */
  readonly pValue: number;
  readonly nA: number;
  readonly nB: number;
  readonly confidence: number;
}

/**
 * Welch's two-sample t-test (unequal variances) with the Welch–Satterthwaite degrees of freedom, and the
 * confidence interval of the difference in means. Written here because neither jstat nor simple-statistics
 * offers the unequal-variance test; the t distribution comes from jstat.
 *
 * @param a - values of group A (at least 2, finite)
 * @param b - values of group B (at least 2, finite)
 * @param confidence - two-sided confidence level in (0, 1)
 * @returns t, df, two-sided p and the interval of meanA − meanB
 * @throws RangeError for fewer than 2 values in a group, non-finite values or a bad confidence
 * @see Welch BL 1947, Biometrika 34:28–35; Satterthwaite FE 1946, Biometrics Bull 2:110–114 (docs/references.md §7)
 */
export function welchTTest(a: readonly number[], b: readonly number[], confidence = 0.95): WelchTTestResult {
  if (a.length < 2 || b.length < 2) throw new RangeError(`Welch's test needs at least 2 values per group; got ${a.length} and ${b.length}`);
  if (![...a, ...b].every(Number.isFinite)) throw new RangeError('Welch\'s test needs finite values');
  if (!(confidence > 0 && confidence < 1)) throw new RangeError(`confidence must be in (0, 1); got ${confidence}`);
  const { studentTCdf, studentTQuantile } = distributions();
  const meanA = mean([...a]);
  const meanB = mean([...b]);
  const difference = meanA - meanB;
  const seA2 = sampleVariance([...a]) / a.length;
  const seB2 = sampleVariance([...b]) / b.length;
  const se = Math.sqrt(seA2 + seB2);
  const base = { meanA, meanB, difference, nA: a.length, nB: b.length, confidence };
  if (se === 0) {
    // no spread in either group: the difference is known exactly
    return { ...base, lower: difference, upper: difference, t: difference === 0 ? 0 : Math.sign(difference) * Infinity, df: null, pValue: difference === 0 ? 1 : 0 };
  }
  const df = (seA2 + seB2) ** 2 / (seA2 ** 2 / (a.length - 1) + seB2 ** 2 / (b.length - 1));
  const t = difference / se;
  // the lower tail of −|t| keeps precision for large |t| (1 − cdf would round to 0)
  const pValue = Math.min(1, 2 * studentTCdf(-Math.abs(t), df));
  const half = studentTQuantile(1 - (1 - confidence) / 2, df) * se;
  return { ...base, lower: difference - half, upper: difference + half, t, df, pValue };
}
