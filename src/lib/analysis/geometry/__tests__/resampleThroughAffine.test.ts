import { describe, expect, it } from 'vitest';
import type { Affine, Raster } from '../../types';
import { applyAffine } from '../applyAffine';
import { composeAffine } from '../composeAffine';
import { downsampledFromFull, resampleThroughAffine } from '../resampleThroughAffine';

const IDENTITY: Affine = [1, 0, 0, 0, 1, 0];

/** A w × h image whose pixel (x, y) holds f(x, y). */
function image(w: number, h: number, f: (x: number, y: number) => number): Raster {
  const data = new Float32Array(w * h);
  for (let y = 0; y < h; y++) for (let x = 0; x < w; x++) data[y * w + x] = f(x, y);
  return { data, width: w, height: h };
}

/** Pseudo-random but fixed pixel values, so a shift by the wrong amount cannot match by accident. */
const noisy = (x: number, y: number) => ((x * 7919 + y * 104729) % 1000) / 7;

describe('resampleThroughAffine', () => {
  it('gives back the same image through the identity (exact)', () => {
    const src = image(13, 9, noisy);
    const out = resampleThroughAffine(src, IDENTITY, 13, 9);
    expect(Array.from(out)).toEqual(Array.from(src.data));
  });

  it('shifts by whole pixels under a known translation, and marks what falls outside as empty', () => {
    const src = image(20, 10, noisy);
    // output (x, y) samples source (x + 3, y − 2): the picture moves 3 px left and 2 px down
    const out = resampleThroughAffine(src, [1, 0, 3, 0, 1, -2], 20, 10);
    for (let y = 0; y < 10; y++) {
      for (let x = 0; x < 20; x++) {
        const v = out[y * 20 + x];
        if (x + 3 <= 19 && y - 2 >= 0) expect(v).toBeCloseTo(src.data[(y - 2) * 20 + x + 3], 4);
        else expect(v).toBeNaN();
      }
    }
    // 17 × 8 pixels keep data, the rest (200 − 136) are empty
    expect(Array.from(out).filter(Number.isNaN)).toHaveLength(200 - 17 * 8);
  });

  it('interpolates a linear ramp exactly at sub-pixel shifts (analytic: bilinear reproduces linear functions)', () => {
    const ramp = (x: number, y: number) => 2 * x + 5 * y + 1;
    const src = image(16, 16, ramp);
    const t: Affine = [1, 0, 0.25, 0, 1, 0.6];
    const out = resampleThroughAffine(src, t, 12, 12);
    for (let y = 0; y < 12; y++) {
      for (let x = 0; x < 12; x++) {
        const p = applyAffine(t, { x, y });
        expect(out[y * 12 + x]).toBeCloseTo(ramp(p.x, p.y), 4);
      }
    }
  });

  it('follows a scale and rotation: a 90° turn with 2× zoom lands each pixel where the map sends it', () => {
    const src = image(8, 8, noisy);
    // source = (7 − y/2, x/2) for output (x, y): quarter turn, half size
    const t: Affine = [0, -0.5, 7, 0.5, 0, 0];
    const out = resampleThroughAffine(src, t, 16, 16);
    expect(out[0 * 16 + 0]).toBeCloseTo(src.data[0 * 8 + 7], 4); // (0,0) → (7,0)
    expect(out[2 * 16 + 4]).toBeCloseTo(src.data[2 * 8 + 6], 4); // (4,2) → (6,2)
    expect(out[14 * 16 + 14]).toBeCloseTo(src.data[7 * 8 + 0], 4); // (14,14) → (0,7)
  });

  it('keeps the edge value within half a pixel of the border and is empty beyond', () => {
    const src = image(4, 4, (x) => x * 10);
    const out = resampleThroughAffine(src, [1, 0, -0.4, 0, 1, 0], 4, 1);
    expect(out[0]).toBe(0); // x = −0.4: inside the first pixel, takes its value
    const far = resampleThroughAffine(src, [1, 0, -0.6, 0, 1, 0], 4, 1);
    expect(far[0]).toBeNaN();
    expect(far[1]).toBeCloseTo(4, 5); // x = 0.4 between 0 and 10
  });

  it('rejects an empty output size', () => {
    expect(() => resampleThroughAffine(image(2, 2, noisy), IDENTITY, 0, 3)).toThrow(RangeError);
  });
});

describe('downsampledFromFull', () => {
  it('puts block centres on copy pixel centres (factor 3: full pixel 1 is copy pixel 0, full 4 is copy 1)', () => {
    const m = downsampledFromFull(3);
    expect(applyAffine(m, { x: 1, y: 4 }).x).toBeCloseTo(0, 12);
    expect(applyAffine(m, { x: 1, y: 4 }).y).toBeCloseTo(1, 12);
    expect(downsampledFromFull(1)).toEqual([1, 0, 0, 0, 1, 0]);
  });

  it('block-averaging a ramp then resampling through it returns the ramp at full resolution', () => {
    const f = 2;
    const ramp = (x: number, y: number) => 3 * x - y;
    // a 2× block average of a linear ramp is the ramp at the block centre
    const copy = image(8, 8, (x, y) => ramp(x * f + 0.5, y * f + 0.5));
    const out = resampleThroughAffine(copy, composeAffine(downsampledFromFull(f), IDENTITY), 14, 14);
    expect(out[5 * 14 + 9]).toBeCloseTo(ramp(9, 5), 4);
  });
});
