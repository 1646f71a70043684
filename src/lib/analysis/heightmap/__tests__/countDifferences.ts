/** Number of positions where two typed arrays differ (NaN-aware); a fast stand-in for deep equality on megapixel arrays. */
export function countDifferences(a: ArrayLike<number>, b: ArrayLike<number>): number {
  if (a.length !== b.length) return Math.max(a.length, b.length);
  let diff = 0;
  for (let i = 0; i < a.length; i++) if (!Object.is(a[i], b[i])) diff++;
  return diff;
}
