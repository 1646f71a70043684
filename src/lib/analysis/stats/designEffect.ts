/**
 * Kish's design effect of cluster sampling: the factor by which clustering inflates the variance of a
 * proportion over simple random sampling, 1 + (m − 1)·ICC. A sample of N clustered vesicles carries as
 * much information as N / DE independent ones.
 *
 * @param clusterSize - vesicles per field (count; for unequal fields Σn²/Σn), ≥ 1
 * @param icc - intraclass correlation in [0, 1]
 * @returns the design effect (≥ 1)
 * @throws RangeError for a cluster size below 1 or an ICC outside [0, 1]
 * @see Kish L 1965, Survey Sampling (Wiley), §5.4 (docs/references.md §7)
 */
export function designEffect(clusterSize: number, icc: number): number {
  if (!(clusterSize >= 1) || !Number.isFinite(clusterSize)) throw new RangeError(`cluster size must be ≥ 1; got ${clusterSize}`);
  if (!(icc >= 0 && icc <= 1)) throw new RangeError(`ICC must be in [0, 1]; got ${icc}`);
  return 1 + (clusterSize - 1) * icc;
}
