import { Matrix, solve } from 'ml-matrix';
import { describe, expect, it } from 'vitest';
import { AnalysisError } from '../../errors';
import { makeHeightScene } from '../../synthetic/makeHeightScene';
import { createRng } from '../../synthetic/random';
import { backgroundRowMedians } from '../backgroundRowMedians';
import { levelHeightMap } from '../levelHeightMap';
import { medianInPlace } from '../medianInPlace';
import { robustSigma } from '../robustSigma';
import { solveLinearSystem } from '../solveLinearSystem';
import { FRAME_U, surfaceFrame, surfaceRow } from '../surfaceRow';
import { updateBackgroundMask } from '../updateBackgroundMask';

/** Median by a full sort: the mean of the two middle values for an even count. */
function sortedMedian(values: ArrayLike<number>): number {
  const s = Float64Array.from(values).sort();
  const h = s.length >> 1;
  return s.length % 2 ? s[h] : (s[h - 1] + s[h]) / 2;
}

/** Brute-force background mask: no value above the cut within the (2r+1)² square around the pixel. */
function referenceMask(values: Float32Array, cut: number, width: number, height: number, r: number): Uint8Array {
  const out = new Uint8Array(width * height);
  for (let y = 0; y < height; y++) {
    for (let x = 0; x < width; x++) {
      let excluded = false;
      for (let dy = -r; dy <= r && !excluded; dy++) {
        for (let dx = -r; dx <= r && !excluded; dx++) {
          const qx = x + dx;
          const qy = y + dy;
          if (qx >= 0 && qy >= 0 && qx < width && qy < height && values[qy * width + qx] > cut) excluded = true;
        }
      }
      out[y * width + x] = excluded ? 0 : 1;
    }
  }
  return out;
}

describe('medianInPlace', () => {
  it('equals the median of a full sort, with and without the bracket, with ties', () => {
    // Invariant against Array.prototype.sort: exact equality (the same two middle values are averaged).
    const rng = createRng(31);
    for (const n of [1, 2, 3, 10, 511, 8191, 8192, 8193, 20000, 131072]) {
      for (const levels of [0, 7]) {
        // levels 0: continuous values; 7: only seven distinct values, so long runs of ties
        const values = Float32Array.from({ length: n }, () => (levels ? Math.floor(rng.uniform() * levels) : rng.normal() * (rng.uniform() < 0.05 ? 40 : 1)));
        expect(medianInPlace(values.slice(), n)).toBe(sortedMedian(values));
      }
    }
  });

  it('falls back to a full selection when the sample misleads the bracket', () => {
    // The bracket is read off the values at regular positions floor(t·n/2048); put large values exactly there and
    // small ones elsewhere, so the bracket encloses large values only and the middle lies far below it.
    const n = 2048 * 8;
    const values = new Float32Array(n);
    for (let i = 0; i < n; i++) values[i] = i % 8 === 0 ? 1000 + i : i * 1e-3;
    expect(medianInPlace(values.slice(), n)).toBe(sortedMedian(values));
    expect(medianInPlace(values.slice(), n - 1)).toBe(sortedMedian(values.subarray(0, n - 1)));
  });

  it('rejects an empty range', () => {
    expect(() => medianInPlace(new Float32Array(4), 0)).toThrow(RangeError);
  });
});

describe('robustSigma', () => {
  it('takes the same regular sample with or without a scratch buffer, and with a mask', () => {
    // Sample rule: the first selected value, then every stride-th selected one (stride = ⌈count/maxSamples⌉).
    // Reference: that sample built by hand and its median/MAD by a full sort.
    const rng = createRng(32);
    const values = Float32Array.from({ length: 5000 }, () => rng.normal());
    const mask = Uint8Array.from({ length: 5000 }, () => (rng.uniform() < 0.7 ? 1 : 0));
    const selected = Array.from(values).filter((_, i) => mask[i]);
    const stride = Math.ceil(selected.length / 1000);
    const sample = selected.filter((_, k) => k % stride === 0);
    const med = sortedMedian(Float32Array.from(sample));
    const mad = sortedMedian(Float32Array.from(sample, (v) => Math.abs(v - med)));
    for (const scratch of [undefined, new Float32Array(4), new Float32Array(5000)]) {
      const r = robustSigma(values, mask, scratch, 1000);
      expect(r.nbSamples).toBe(sample.length);
      expect(r.median).toBe(med);
      expect(r.robustSigma).toBe(1.4826 * mad);
    }
  });
});

describe('updateBackgroundMask', () => {
  it('equals a brute-force square dilation on both the word-wide and the byte-wise path', () => {
    // Widths that are multiples of 4 with r ≤ 4 take the word-wide path; the others the byte-wise one.
    const rng = createRng(33);
    let nbCases = 0;
    for (const [width, height] of [[1, 1], [4, 1], [1, 9], [8, 8], [12, 7], [13, 7], [64, 33], [30, 50], [3, 3]]) {
      for (const r of [0, 1, 2, 3, 4, 5]) {
        for (const density of [0.01, 0.1, 0.5]) {
          const values = Float32Array.from({ length: width * height }, () => (rng.uniform() < density ? 5 : rng.normal() * 0.1));
          const background = Uint8Array.from({ length: width * height }, () => (rng.uniform() < 0.5 ? 1 : 0));
          const before = background.slice();
          const expected = referenceMask(values, 1, width, height, r);
          const got = updateBackgroundMask(values, 1, width, height, r, background);
          expect(background).toEqual(expected);
          expect(got.nbBackground).toBe(expected.reduce((s, v) => s + v, 0));
          expect(got.nbChanges).toBe(expected.reduce((s, v, i) => s + (v !== before[i] ? 1 : 0), 0));
          nbCases++;
        }
      }
    }
    expect(nbCases).toBe(9 * 6 * 3);
  });
});

describe('backgroundRowMedians', () => {
  it('gives each row the exact median of its background residuals, from a guess or without one', () => {
    // Reference: per row, residual = data − (A + B·u + C·u²) rounded to Float32, median by a full sort.
    const rng = createRng(34);
    const width = 57;
    const height = 40;
    const frame = surfaceFrame(width, height, true);
    const us = frame.subarray(FRAME_U);
    const data = Float32Array.from({ length: width * height }, () => rng.normal() * 0.2 + (rng.uniform() < 0.1 ? 8 : 0));
    const background = Uint8Array.from(data, (v) => (v > 3 ? 0 : 1));
    background.fill(0, 5 * width, 6 * width - 3); // row 5 keeps only 3 background px: falls back to the whole row
    const c = Float64Array.from([0.3, 0.1, -0.2, 0.05, 0.02, 0.01]);
    const abc = new Float64Array(3);
    const expected = Float64Array.from({ length: height }, (_, y) => {
      surfaceRow(c, frame, y, abc);
      const residuals: number[] = [];
      const useAll = background.subarray(y * width, (y + 1) * width).reduce((s, v) => s + v, 0) < 8;
      for (let x = 0; x < width; x++) {
        if (!useAll && !background[y * width + x]) continue;
        const u = us[x];
        residuals.push(Math.fround(data[y * width + x] - (abc[0] + u * (abc[1] + abc[2] * u))));
      }
      return sortedMedian(residuals);
    });
    const scratch = new Float32Array(2 * width);
    const plain = new Float64Array(height);
    expect(backgroundRowMedians(data, width, height, c, frame, background, 8, null, 0, scratch, plain)).toBe(0);
    expect(plain).toEqual(expected);
    // good guesses (the answers, as if taken against a surface 0.01 nm higher) are used on nearly every row
    const before = Float64Array.from([0.31, 0.1, -0.2, 0.05, 0.02, 0.01]);
    const fromGood = Float64Array.from(expected, (v) => v + 0.01);
    expect(backgroundRowMedians(data, width, height, c, frame, background, 8, before, 0.05, scratch, fromGood)).toBeGreaterThan(height - 3);
    expect(fromGood).toEqual(expected);
    // bad guesses miss everywhere and still give the exact medians
    const fromBad = new Float64Array(height).fill(50);
    expect(backgroundRowMedians(data, width, height, c, frame, background, 8, c, 0.05, scratch, fromBad)).toBe(0);
    expect(fromBad).toEqual(expected);
  });
});

describe('levelHeightMap on degenerate layouts', () => {
  it('levels a strip whose blocks form a single row (it used to fail inside the matrix solver)', () => {
    // 117 × 13 px: the starting blocks (8 px) form one row, which cannot fix the y slope, so levelling starts from
    // every pixel instead. The x slope 0.04 nm/px is then recovered from ~1400 px of SD 0.15 nm: SE ≈
    // 0.15/√(1400·117²/12) ≈ 1.2e-4 nm/px; tolerance 5 SE.
    const scene = makeHeightScene({ seed: 9, width: 117, height: 13, pixelSizeNm: 5, nbVesicles: 0, tiltXNmPerPx: 0.04, lineOffsetSigmaNm: 0.6, noiseSigmaNm: 0.15 });
    const r = levelHeightMap(scene.raster);
    expect(Math.abs(r.surface.slopeXNmPerPx - 0.04)).toBeLessThan(6e-4);
    expect(Math.abs(r.backgroundSigmaNm - 0.15)).toBeLessThan(0.03);
  });

  it('reports insufficient_background, not a solver error, for a single row of pixels', () => {
    const data = Float32Array.from({ length: 7 }, (_, i) => i * 0.1);
    try {
      levelHeightMap({ data, width: 7, height: 1 });
      expect.unreachable();
    } catch (e) {
      expect(e).toBeInstanceOf(AnalysisError);
      expect((e as AnalysisError).code).toBe('insufficient_background');
    }
  });
});

describe('solveLinearSystem', () => {
  it('gives bit for bit what ml-matrix solve gives, and null where ml-matrix finds the matrix singular', () => {
    // Invariant against the package it replaces in the levelling: same LU with partial pivoting, same operation
    // order, so exact equality; systems from 1 × 1 to 6 × 6, some with a repeated row (singular).
    const rng = createRng(35);
    for (let t = 0; t < 300; t++) {
      const p = 1 + (t % 6);
      const a = Float64Array.from({ length: p * p }, () => rng.normal() * 10 ** Math.floor(rng.uniform() * 6 - 3));
      if (t % 10 === 0 && p > 1) for (let j = 0; j < p; j++) a[p + j] = a[j]; // row 1 = row 0
      const b = Float64Array.from({ length: p }, () => rng.normal());
      const rows = Array.from({ length: p }, (_, i) => Array.from(a.subarray(i * p, (i + 1) * p)));
      let expected: number[] | null;
      try {
        expected = solve(new Matrix(rows), Matrix.columnVector(Array.from(b))).getColumn(0);
      } catch {
        expected = null;
      }
      const got = solveLinearSystem(a, b);
      expect(got === null ? null : Array.from(got)).toEqual(expected);
    }
  });
});
