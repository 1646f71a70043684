import { distributions } from './distributions';

/**
 * One-sided upper-tail p-value of a standard normal statistic, P(Z ≥ z) = Φ(−z). Computed as Φ(−z) rather than
 * 1 − Φ(z) so that small p-values keep their precision (jStat's CDF is built on erfc).
 *
 * @param z - the statistic (dimensionless); NaN gives NaN
 * @returns p in [0, 1]
 * @see Abramowitz M, Stegun IA. Handbook of Mathematical Functions, 1964, §26.2 (normal tail).
 */
export function normalUpperTail(z: number): number {
  if (Number.isNaN(z)) return Number.NaN;
  return distributions().normalCdf(-z);
}
