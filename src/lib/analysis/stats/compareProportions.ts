import { chiSquare2x2 } from './chiSquare2x2';
import { fisherExact } from './fisherExact';
import { newcombeDifference } from './newcombeDifference';

/** Options of {@link compareProportions}. */
export interface CompareProportionsOptions {
  /**
   * Confidence level of the difference interval.
   * @default 0.95
   */
  readonly confidence?: number;
  /**
   * Use Fisher's exact test when any expected count is below this.
   * @default 5
   */
  readonly minExpectedForChiSquare?: number;
  /**
   * Yates' correction when the chi-square test is used.
   * @default false
   */
  readonly yates?: boolean;
}

/** Result of {@link compareProportions}. */
export interface CompareProportionsResult {
  readonly test: 'fisher_exact' | 'chi_square';
  /** Two-sided p-value of the chosen test. */
  readonly pValue: number;
  readonly minExpected: number;
  readonly proportion1: number;
  readonly proportion2: number;
  /** p1 − p2 with Newcombe's hybrid score interval. */
  readonly difference: number;
  readonly differenceLower: number;
  readonly differenceUpper: number;
}

/**
 * Compares two positive fractions (e.g. marker-positive vesicles in two samples): Fisher's exact
 * test when any expected count is below 5, Pearson's chi-square otherwise (common practice), plus
 * the difference with Newcombe's interval.
 *
 * @param k1 - positives in sample 1
 * @param n1 - total in sample 1
 * @param k2 - positives in sample 2
 * @param n2 - total in sample 2
 * @param options - see {@link CompareProportionsOptions}
 * @returns the test used, its p-value and the difference with its interval
 * @throws RangeError for invalid counts
 * @see W. G. Cochran, "Some methods for strengthening the common χ² tests", Biometrics 10(4), 1954 (expected ≥ 5 rule)
 */
export function compareProportions(
  k1: number,
  n1: number,
  k2: number,
  n2: number,
  options: CompareProportionsOptions = {},
): CompareProportionsResult {
  const { confidence = 0.95, minExpectedForChiSquare = 5, yates = false } = options;
  const diff = newcombeDifference(k1, n1, k2, n2, confidence);
  const table = [[k1, n1 - k1], [k2, n2 - k2]] as const;
  const chi = chiSquare2x2(table, { yates });
  const useFisher = !(chi.minExpected >= minExpectedForChiSquare);
  return {
    test: useFisher ? 'fisher_exact' : 'chi_square',
    pValue: useFisher ? fisherExact(table).pTwoSided : chi.pValue,
    minExpected: chi.minExpected,
    proportion1: k1 / n1,
    proportion2: k2 / n2,
    difference: diff.difference,
    differenceLower: diff.lower,
    differenceUpper: diff.upper,
  };
}
