import type { FieldCount } from './types';

/** Result of {@link binaryIntraclassCorrelation}. */
export interface BinaryIntraclassCorrelationResult {
  /** ANOVA estimate truncated to [0, 1] (a negative estimate means no detectable clustering). */
  readonly icc: number;
  /** The estimate before truncation. */
  readonly iccRaw: number;
  /** Between-cluster and within-cluster mean squares. */
  readonly msBetween: number;
  readonly msWithin: number;
  /** Clusters used (fields with at least one vesicle). */
  readonly clusters: number;
}

/**
 * Intraclass correlation of a binary outcome (marker-positive or not) between clusters (fields), by the
 * one-way ANOVA estimator: ρ = (MSB − MSW) / (MSB + (n₀ − 1)·MSW) with n₀ = (N − Σnᵢ²/N) / (k − 1).
 * A dozen lines, so no package. Null with fewer than two non-empty clusters or fewer vesicles than two per cluster.
 *
 * @param clusters - positive and total counts per cluster; clusters with total 0 are skipped
 * @returns the estimate and its mean squares, or null when it cannot be estimated
 * @throws RangeError for counts that are not integers with 0 ≤ positive ≤ total
 * @see Ridout MS, Demétrio CGB, Firth D 1999, Biometrics 55:137–148 (ANOVA estimator; docs/references.md §7)
 */
export function binaryIntraclassCorrelation(clusters: readonly FieldCount[]): BinaryIntraclassCorrelationResult | null {
  for (const c of clusters) {
    if (!Number.isInteger(c.positive) || !Number.isInteger(c.total) || c.positive < 0 || c.positive > c.total) {
      throw new RangeError(`need integers 0 ≤ positive ≤ total; got ${c.positive} of ${c.total}`);
    }
  }
  const used = clusters.filter((c) => c.total > 0);
  const k = used.length;
  const n = used.reduce((t, c) => t + c.total, 0);
  if (k < 2 || n - k < 1) return null;
  const p = used.reduce((t, c) => t + c.positive, 0) / n;
  const msBetween = used.reduce((t, c) => t + c.total * (c.positive / c.total - p) ** 2, 0) / (k - 1);
  const msWithin = used.reduce((t, c) => t + c.positive * (1 - c.positive / c.total), 0) / (n - k);
  const n0 = (n - used.reduce((t, c) => t + c.total * c.total, 0) / n) / (k - 1);
  const denom = msBetween + (n0 - 1) * msWithin;
  // every cluster all-positive or all-negative alike: no spread at all, hence no clustering to correct for
  const iccRaw = denom > 0 ? (msBetween - msWithin) / denom : 0;
  return { icc: Math.min(1, Math.max(0, iccRaw)), iccRaw, msBetween, msWithin, clusters: k };
}
