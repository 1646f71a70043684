import { describe, it, expect } from 'vitest';
import { mannWhitneyU, mannWhitneyUBinned, binnedMedian, type BinnedPair } from '..';

/** Bins (value, count per group) of two samples, as the dashboard's summary tables hold them. */
function toBins(a: number[], b: number[]): BinnedPair[] {
  const values = [...new Set([...a, ...b])].sort((x, y) => x - y);
  return values.map((value) => ({ value, countA: a.filter((v) => v === value).length, countB: b.filter((v) => v === value).length }));
}

describe('mannWhitneyUBinned', () => {
  // Hollander & Wolfe (1973) p. 69 permeability data, as in R's wilcox.test example (docs/references.md §7): U = 35.
  const X = [0.8, 0.83, 1.89, 1.04, 1.45, 1.38, 1.91, 1.64, 0.73, 1.46];
  const Y = [1.15, 0.88, 0.9, 0.74, 1.21];

  it('gives U = 35 on the Hollander & Wolfe data, and the same normal approximation as mannWhitneyU', () => {
    const r = mannWhitneyUBinned(toBins(X, Y));
    expect(r.uStatistic).toBe(35);
    const ref = mannWhitneyU(X, Y, { exact: false });
    expect(r.z).toBeCloseTo(ref.z!, 12);
    expect(r.pValue).toBeCloseTo(ref.pValue, 12);
  });

  it('matches mannWhitneyU on heavily tied values (tie-corrected variance)', () => {
    const a = [1, 1, 1, 2, 2, 3, 3, 3, 3, 5, 6, 6];
    const b = [0, 1, 2, 2, 2, 2, 4, 4, 5, 5];
    const r = mannWhitneyUBinned(toBins(a, b));
    const ref = mannWhitneyU(a, b, { exact: false });
    expect(r.uStatistic).toBe(ref.uStatistic);
    expect(r.pValue).toBeCloseTo(ref.pValue, 12);
  });

  it('gives the median of each group, and refuses unsorted bins and empty groups', () => {
    const bins = toBins([1, 2, 2, 9], [3]);
    expect(binnedMedian(bins, 'countA')).toBe(2);
    expect(binnedMedian(bins, 'countB')).toBe(3);
    expect(() => mannWhitneyUBinned([{ value: 2, countA: 1, countB: 1 }, { value: 1, countA: 1, countB: 1 }])).toThrow(RangeError);
    expect(() => mannWhitneyUBinned([{ value: 1, countA: 3, countB: 0 }])).toThrow(RangeError);
  });
});
