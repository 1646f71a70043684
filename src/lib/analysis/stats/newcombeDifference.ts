import { wilsonInterval } from './wilsonInterval';

/** Result of {@link newcombeDifference}. */
export interface NewcombeDifferenceResult {
  /** p1 − p2. */
  readonly difference: number;
  readonly lower: number;
  readonly upper: number;
  readonly confidence: number;
}

/**
 * Confidence interval for the difference of two independent proportions, p1 − p2, by Newcombe's
 * hybrid score method (method 10): combine each group's Wilson limits (l, u) as
 * L = d − √((p1 − l1)² + (u2 − p2)²), U = d + √((u1 − p1)² + (p2 − l2)²).
 * Written here because neither jstat nor simple-statistics provides it.
 *
 * @param k1 - successes in group 1
 * @param n1 - trials in group 1
 * @param k2 - successes in group 2
 * @param n2 - trials in group 2
 * @param confidence - two-sided level in (0, 1)
 * @returns the difference and its interval (within [−1, 1])
 * @throws RangeError for invalid counts
 * @see R. G. Newcombe, "Interval estimation for the difference between independent proportions", Stat. Med. 17:873–890, 1998
 */
export function newcombeDifference(
  k1: number,
  n1: number,
  k2: number,
  n2: number,
  confidence = 0.95,
): NewcombeDifferenceResult {
  const a = wilsonInterval(k1, n1, confidence);
  const b = wilsonInterval(k2, n2, confidence);
  const d = a.proportion - b.proportion;
  return {
    difference: d,
    lower: d - Math.hypot(a.proportion - a.lower, b.upper - b.proportion),
    upper: d + Math.hypot(a.upper - a.proportion, b.proportion - b.lower),
    confidence,
  };
}
