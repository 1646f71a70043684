/**
 * Benjamini–Hochberg adjusted p-values (step-up false discovery rate): sort ascending,
 * q_(i) = min over j ≥ i of m·p_(j)/j, capped at 1, returned in the input order. Rejecting every
 * hypothesis with q ≤ α controls the FDR at α for independent tests. A dozen lines, so no package.
 *
 * @param pValues - raw p-values in [0, 1]
 * @returns adjusted p-values, same order and length (input not changed)
 * @throws RangeError for values outside [0, 1] or NaN
 * @see Y. Benjamini, Y. Hochberg, "Controlling the false discovery rate", JRSS B 57(1):289–300, 1995
 */
export function benjaminiHochberg(pValues: readonly number[]): number[] {
  if (!pValues.every((p) => p >= 0 && p <= 1)) {
    throw new RangeError(`p-values must lie in [0, 1]; got ${JSON.stringify(pValues)}`);
  }
  const m = pValues.length;
  const order = pValues.map((_, i) => i).sort((x, y) => pValues[x] - pValues[y]);
  const adjusted = new Array<number>(m);
  let running = 1;
  for (let r = m - 1; r >= 0; r--) {
    running = Math.min(running, (m * pValues[order[r]]) / (r + 1));
    adjusted[order[r]] = running;
  }
  return adjusted;
}
