import { describe, expect, it } from 'vitest';
import { colourMapHeight, VIRIDIS_RGB } from '../colourMapHeight';
import { contrastFromPercentiles } from '../contrastFromPercentiles';

describe('VIRIDIS_RGB', () => {
  it('matches matplotlib viridis entries 0, 128 and 255 (matplotlib _cm_listed.py, values from memory, ×255 rounded)', () => {
    // viridis[0] = (0.267004, 0.004874, 0.329415); [128] = (0.127568, 0.566949, 0.550556); [255] = (0.993248, 0.906157, 0.143936)
    expect(Array.from(VIRIDIS_RGB.subarray(0, 3))).toEqual([68, 1, 84]);
    expect(Array.from(VIRIDIS_RGB.subarray(128 * 3, 128 * 3 + 3))).toEqual([33, 145, 140]);
    expect(Array.from(VIRIDIS_RGB.subarray(255 * 3))).toEqual([253, 231, 37]);
    expect(VIRIDIS_RGB.length).toBe(768);
  });

  it('rises evenly in CIE L* from 15 to 91, as a perceptually uniform map should', () => {
    // sRGB → linear (IEC 61966-2-1), Y with Rec. 709 weights, L* = 116 f(Y) − 16 (CIE 1976); formulas from memory
    const lin = (c: number): number => (c / 255 <= 0.04045 ? c / 255 / 12.92 : ((c / 255 + 0.055) / 1.055) ** 2.4);
    const lStar = (k: number): number => {
      const y = 0.2126 * lin(VIRIDIS_RGB[k * 3]) + 0.7152 * lin(VIRIDIS_RGB[k * 3 + 1]) + 0.0722 * lin(VIRIDIS_RGB[k * 3 + 2]);
      return 116 * (y > 216 / 24389 ? Math.cbrt(y) : (24389 / 27 * y + 16) / 116) - 16;
    };
    expect(lStar(0)).toBeCloseTo(14.9, 1);
    expect(lStar(255)).toBeCloseTo(90.9, 1);
    for (let k = 1; k < 256; k++) {
      // 8-bit rounding of each channel moves L* by up to ~0.05, so allow −0.1; no step above 0.7 L*
      const step = lStar(k) - lStar(k - 1);
      expect(step).toBeGreaterThan(-0.1);
      expect(step).toBeLessThan(0.7);
    }
    // equal fifths of the map span equal lightness: each 51-entry span rises 14.5–17 L*
    for (let k = 51; k < 256; k += 51) {
      const rise = lStar(k) - lStar(k - 51);
      expect(rise).toBeGreaterThan(14.5);
      expect(rise).toBeLessThan(17);
    }
  });
});

describe('colourMapHeight', () => {
  it('maps min to the first colour, max to the last, clamps outside and paints NaN black', () => {
    const raster = { data: new Float32Array([0, 10, 5, -3, 99, NaN]), width: 3, height: 2 };
    const before = raster.data.slice();
    const { rgb, colourBar, nbMissingPixels } = colourMapHeight(raster, { minNm: 0, maxNm: 10, nbStops: 3 });
    const px = (i: number): number[] => Array.from(rgb.subarray(i * 3, i * 3 + 3));
    expect(px(0)).toEqual([68, 1, 84]);
    expect(px(1)).toEqual([253, 231, 37]);
    // 5 nm → index round(127.5) = 128
    expect(px(2)).toEqual([33, 145, 140]);
    expect(px(3)).toEqual([68, 1, 84]);
    expect(px(4)).toEqual([253, 231, 37]);
    expect(px(5)).toEqual([0, 0, 0]);
    expect(nbMissingPixels).toBe(1);
    expect(colourBar).toEqual([
      { offset: 0, valueNm: 0, colour: '#440154' },
      { offset: 0.5, valueNm: 5, colour: '#21918c' },
      { offset: 1, valueNm: 10, colour: '#fde725' },
    ]);
    expect(raster.data).toEqual(before);
  });

  it('throws RangeError for an empty or inverted range', () => {
    const raster = { data: [1], width: 1, height: 1 };
    expect(() => colourMapHeight(raster, { minNm: 5, maxNm: 5 })).toThrow(RangeError);
    expect(() => colourMapHeight(raster, { minNm: 6, maxNm: 5 })).toThrow(RangeError);
  });
});

describe('contrastFromPercentiles', () => {
  it('0..1000 gives 5 and 995 at 0.5 % and 99.5 % (Hyndman & Fan definition 7: h = (n − 1)p)', () => {
    const data = Float32Array.from({ length: 1001 }, (_, i) => 1000 - i);
    expect(contrastFromPercentiles(data)).toEqual({ min: 5, max: 995, nbFinite: 1001 });
  });

  it('interpolates between order statistics: [1, 2, 3, 4] at 50 % → 2.5, at 10 % → 1.3 (definition 7)', () => {
    expect(contrastFromPercentiles([4, 1, 3, 2], 10, 50).max).toBe(2.5);
    expect(contrastFromPercentiles([4, 1, 3, 2], 10, 50).min).toBeCloseTo(1.3, 12);
  });

  it('skips NaN and ±Infinity, leaves the input untouched, and agrees with a full sort on random data', () => {
    let s = 12345;
    const rand = (): number => { s = (s * 1103515245 + 12345) >>> 0; return s / 2 ** 32; };
    const data = Float32Array.from({ length: 100_003 }, (_, i) => (i % 1000 === 0 ? NaN : i % 777 === 0 ? Infinity : rand() * 50 - 10));
    const before = data.slice();
    const got = contrastFromPercentiles(data, 0.5, 99.5);
    const sorted = Array.from(data).filter(Number.isFinite).sort((a, b) => a - b);
    const at = (p: number): number => {
      const h = (sorted.length - 1) * p / 100;
      const lo = Math.floor(h);
      return sorted[lo] + (h - lo) * (sorted[lo + 1] - sorted[lo]);
    };
    expect(got.nbFinite).toBe(sorted.length);
    // 1e-9 nm: both paths do the same float64 arithmetic on the same two order statistics
    expect(got.min).toBeCloseTo(at(0.5), 9);
    expect(got.max).toBeCloseTo(at(99.5), 9);
    expect(data).toEqual(before);
  });

  it('returns NaN bounds when nothing is finite, and RangeError for inverted percentiles', () => {
    expect(contrastFromPercentiles([NaN, NaN])).toEqual({ min: NaN, max: NaN, nbFinite: 0 });
    expect(() => contrastFromPercentiles([1, 2], 60, 40)).toThrow(RangeError);
  });
});
