import { welchTTest } from './welchTTest';

/** Result of {@link compareSampleMedians}. */
export interface CompareSampleMediansResult {
  /** Samples with a median, per group (count). */
  readonly nSamplesA: number;
  readonly nSamplesB: number;
  /** Mean of the per-sample medians (nm), null without samples. */
  readonly meanMedianANm: number | null;
  readonly meanMedianBNm: number | null;
  /** meanMedianA − meanMedianB (nm) with its 95% Welch interval. */
  readonly differenceNm: number | null;
  readonly ci95Nm: readonly [number, number] | null;
  readonly pValue: number | null;
  readonly method: 'welch_sample_medians' | 'not_tested';
}

/**
 * Compares a size (diameter or height) between groups with the sample as the unit: each sample contributes
 * its median, and the groups' medians are compared by Welch's t-test (never the vesicles themselves).
 *
 * @param a - per-sample medians of group A (nm); nulls (samples without vesicles) are left out
 * @param b - per-sample medians of group B (nm)
 * @returns the difference of the mean medians with its interval and p (null below 2 samples a group)
 */
export function compareSampleMedians(a: readonly (number | null)[], b: readonly (number | null)[]): CompareSampleMediansResult {
  const xa = a.filter((x): x is number => x !== null && Number.isFinite(x));
  const xb = b.filter((x): x is number => x !== null && Number.isFinite(x));
  const meanOf = (xs: number[]) => (xs.length ? xs.reduce((t, x) => t + x, 0) / xs.length : null);
  const ma = meanOf(xa);
  const mb = meanOf(xb);
  const base = { nSamplesA: xa.length, nSamplesB: xb.length, meanMedianANm: ma, meanMedianBNm: mb, differenceNm: ma === null || mb === null ? null : ma - mb };
  if (xa.length < 2 || xb.length < 2) return { ...base, ci95Nm: null, pValue: null, method: 'not_tested' };
  const w = welchTTest(xa, xb);
  return { ...base, ci95Nm: [w.lower, w.upper], pValue: w.pValue, method: 'welch_sample_medians' };
}
