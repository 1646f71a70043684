import { describe, expect, it } from 'vitest';
import { countDifferences } from './countDifferences';
import { createRng } from '../../synthetic/random';
import { otsuHistogramThreshold } from '../otsuHistogramThreshold';
import { otsuThreshold } from '../otsuThreshold';
import { robustSigma } from '../robustSigma';
import { robustThreshold } from '../robustThreshold';
import { selectKth } from '../selectKth';
import { selectThreshold } from '../selectThreshold';

const OTSU_IMAGE = [
  [0, 0, 1, 3, 5],
  [0, 1, 4, 3, 4],
  [1, 2, 5, 4, 1],
  [2, 4, 5, 2, 1],
  [4, 5, 1, 0, 0],
];

describe('otsuHistogramThreshold', () => {
  it('splits the hand-worked histogram of docs/references.md §6 at level 3', () => {
    // Source: docs/references.md §6 (Otsu 1979), levels 1–6, counts [2, 5, 3, 1, 4, 6]:
    // t = 3, σ_B² = 2.8069, w₀ = 0.4762, μ₀ = 2.1, μ₁ = 5.4545. Tolerance 5e-5: values printed to 4 decimals.
    const r = otsuHistogramThreshold([2, 5, 3, 1, 4, 6], [1, 2, 3, 4, 5, 6]);
    expect(r.thresholdIndex).toBe(2); // level 3
    expect(Math.abs(r.betweenClassVariance - 2.8069)).toBeLessThan(5e-5);
    expect(Math.abs(r.w0 - 0.4762)).toBeLessThan(5e-5);
    expect(Math.abs(r.mu0 - 2.1)).toBeLessThan(5e-5);
    expect(Math.abs(r.mu1 - 5.4545)).toBeLessThan(5e-5);
  });

  it('splits the 5×5 image of docs/references.md §6 at 2 with σ_B² = 2.7236', () => {
    // Source: docs/references.md §6, scikit-image test_otsu image: threshold 2 (foreground > 2), σ_B² = 2.7236.
    // Tolerance 5e-5: printed to 4 decimals.
    const counts = new Array(6).fill(0);
    for (const row of OTSU_IMAGE) for (const v of row) counts[v]++;
    const r = otsuHistogramThreshold(counts, [0, 1, 2, 3, 4, 5]);
    expect(r.thresholdIndex).toBe(2);
    expect(Math.abs(r.betweenClassVariance - 2.7236)).toBeLessThan(5e-5);
  });

  it('throws single_class_histogram for one populated bin', () => {
    expect(() => otsuHistogramThreshold([0, 7, 0])).toThrowError(expect.objectContaining({ code: 'single_class_histogram' }));
  });
});

describe('otsuThreshold (float raster)', () => {
  it('puts the 5×5 image threshold between 2 and 3, so foreground = pixels > 2', () => {
    // Source: docs/references.md §6 (same image). With 6 bins over [0, 5] the split is at a bin edge in (2, 3).
    const data = Float32Array.from(OTSU_IMAGE.flat());
    const r = otsuThreshold({ data, width: 5, height: 5 }, { nbBins: 6 });
    expect(r.thresholdNm).toBeGreaterThan(2);
    expect(r.thresholdNm).toBeLessThan(3);
    const foreground = Array.from(data).filter((v) => v > r.thresholdNm).length;
    expect(foreground).toBe(OTSU_IMAGE.flat().filter((v) => v > 2).length);
  });

  it('separates a two-level noisy image exactly', () => {
    // Two equal classes N(0, 0.3²) and N(10, 0.3²) (Otsu 1979 criterion): every split inside the empty gap
    // gives the same σ_B², so the threshold must lie in the gap and classify all 4096 pixels correctly.
    const rng = createRng(9);
    const data = new Float32Array(4096);
    for (let i = 0; i < data.length; i++) data[i] = (i % 2 ? 10 : 0) + 0.3 * rng.normal();
    const r = otsuThreshold({ data, width: 64, height: 64 }, { nbBins: 64 });
    const low = Array.from(data).filter((_, i) => i % 2 === 0);
    const high = Array.from(data).filter((_, i) => i % 2 === 1);
    expect(r.thresholdNm).toBeGreaterThanOrEqual(Math.max(...low));
    expect(r.thresholdNm).toBeLessThan(Math.min(...high));
    const fg = Array.from(data).filter((v) => v > r.thresholdNm).length;
    expect(fg).toBe(2048);
  });
});

describe('robust statistics', () => {
  it('selectKth agrees with a full sort', () => {
    // Invariant against Array.prototype.sort on random data (exact equality: same values).
    const rng = createRng(2);
    const values = Float64Array.from({ length: 1001 }, () => rng.normal());
    const sorted = Array.from(values).sort((a, b) => a - b);
    for (const k of [0, 1, 500, 999, 1000]) expect(selectKth(values.slice(), 1001, k)).toBe(sorted[k]);
  });

  it('robustSigma is exact on a small set and ≈ σ on Gaussian data', () => {
    // [1, 2, 3, 4, 100]: median 3, |dev| = [2, 1, 0, 1, 97] → MAD 1 → 1.4826 (Hampel 1974 scaling). Exact.
    const small = robustSigma([1, 2, 3, 4, 100]);
    expect(small.median).toBe(3);
    expect(Math.abs(small.robustSigma - 1.4826)).toBeLessThan(1e-12);
    // Even count: median of [1, 2, 3, 10] = 2.5 (mean of the middle pair). Exact.
    expect(robustSigma([10, 1, 3, 2]).median).toBe(2.5);
    // Gaussian σ = 0.15, n = 50 000: the MAD-based SD has SE ≈ 1.67σ/√n ≈ 0.0011 nm (from memory);
    // tolerance 5 SE plus 1.4826 vs 1/Φ⁻¹(0.75) = 1.482602 rounding.
    const rng = createRng(4);
    const g = Float32Array.from({ length: 50_000 }, () => 0.15 * rng.normal());
    expect(Math.abs(robustSigma(g).robustSigma - 0.15)).toBeLessThan(0.0056);
  });

  it('robustThreshold ignores particles: k·σ above the background', () => {
    // 20% of pixels at +30 nm must not move the threshold: median + 3σ of N(0, 0.2²) = 0.6 nm.
    // Tolerance 0.03 nm: SE of the clipped median/MAD with 40 000 samples is < 0.003 nm; the ±3σ clip
    // of the background itself shrinks the MAD by < 1% (common practice).
    const rng = createRng(8);
    const data = new Float32Array(200 * 250);
    for (let i = 0; i < data.length; i++) data[i] = 0.2 * rng.normal() + (i % 5 === 0 ? 30 : 0);
    const copy = data.slice();
    const r = robustThreshold({ data, width: 200, height: 250 }, { k: 3 });
    expect(Math.abs(r.thresholdNm - 0.6)).toBeLessThan(0.03);
    expect(countDifferences(data, copy)).toBe(0);
    expect(selectThreshold({ data, width: 200, height: 250 }, { method: 'manual', thresholdNm: 1.5 }).thresholdNm).toBe(1.5);
  });
});
