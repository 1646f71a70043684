/**
 * Empirical logit of a count: log((x + ½) / (n − x + ½)). Finite at x = 0 and x = n, where the plain logit
 * is ±∞, and nearly unbiased for the logit of the underlying proportion.
 *
 * @param positive - positive vesicles (count), integer 0…total
 * @param total - vesicles measured (count), integer ≥ 1
 * @returns the empirical logit
 * @throws RangeError for counts that are not integers with 0 ≤ positive ≤ total, total ≥ 1
 * @see Cox DR 1970, The Analysis of Binary Data (Methuen), §3.2 (docs/references.md §7)
 */
export function empiricalLogit(positive: number, total: number): number {
  if (!Number.isInteger(positive) || !Number.isInteger(total) || total < 1 || positive < 0 || positive > total) {
    throw new RangeError(`need integers 0 ≤ positive ≤ total, total ≥ 1; got ${positive} of ${total}`);
  }
  return Math.log((positive + 0.5) / (total - positive + 0.5));
}
