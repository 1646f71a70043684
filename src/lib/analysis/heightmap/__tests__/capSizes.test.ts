import { describe, expect, it } from 'vitest';
import { createRng } from '../../synthetic/random';
import { dilateWithBallTip } from '../../synthetic/dilateWithBallTip';
import type { Raster } from '../../types';
import { detectVesicles } from '../detectVesicles';
import { fitSphericalCap } from '../fitSphericalCap';
import { measureVesicle } from '../measureVesicle';
import { sphericalCap } from '../sphericalCap';
import { tipCorrectedCap } from '../tipCorrectedCap';

interface CapSpec { xNm: number; yNm: number; baseRadiusNm: number; heightNm: number }

/**
 * An AFM image of spherical caps as a ball tip records it: the true surface (caps on a flat substrate, the higher
 * surface where two overlap) drawn on a grid `oversample` times finer than the AFM pixel, grey-scale dilated with a
 * ball of radius tipRadiusNm on that grid, then sampled at the AFM pixel centres, plus seeded white noise. Nothing
 * here uses the √(a² + 2hR) relation or the R_c + R sphere that the measurement inverts.
 */
function tipImage(o: { sizePx: number; pixelSizeNm: number; caps: CapSpec[]; tipRadiusNm: number; noiseSigmaNm: number; seed?: number; oversample?: number }): Raster {
  const { sizePx, pixelSizeNm, caps, tipRadiusNm, noiseSigmaNm, seed = 3, oversample = 4 } = o;
  const n = sizePx * oversample;
  const step = pixelSizeNm / oversample;
  const fine = new Float32Array(n * n);
  // fine sample k sits at AFM pixel coordinate k / oversample (AFM pixel centres are every oversample-th sample)
  for (let y = 0; y < n; y++) {
    for (let x = 0; x < n; x++) {
      let z = 0;
      for (const c of caps) {
        const rc = (c.baseRadiusNm ** 2 + c.heightNm ** 2) / (2 * c.heightNm);
        const d2 = (x * step - c.xNm) ** 2 + (y * step - c.yNm) ** 2;
        if (d2 < c.baseRadiusNm ** 2) z = Math.max(z, Math.sqrt(rc * rc - d2) - (rc - c.heightNm));
      }
      fine[y * n + x] = z;
    }
  }
  const dilated = dilateWithBallTip({ data: fine, width: n, height: n }, step, tipRadiusNm);
  const rng = createRng(seed);
  const data = new Float32Array(sizePx * sizePx);
  for (let y = 0; y < sizePx; y++) {
    for (let x = 0; x < sizePx; x++) data[y * sizePx + x] = dilated.data[y * oversample * n + x * oversample] + noiseSigmaNm * rng.normal();
  }
  return { data, width: sizePx, height: sizePx };
}

/** Detect on a fixed threshold and measure every vesicle. */
function measureAll(image: Raster, pixelSizeNm: number, thresholdNm: number, tipRadiusNm: number) {
  const det = detectVesicles(image, { thresholdNm, minSeparationPx: 3, minProminenceNm: 2 });
  return det.vesicles.map((r) => measureVesicle(image, det.labels, r, pixelSizeNm, { thresholdNm, tipRadiusNm }));
}

describe('tipCorrectedCap', () => {
  it('returns the docs/references.md §2 cap (h = 20, a = 50) from its R = 10 nm tip image', () => {
    // §2: R_c = 72.5 nm; §3: a ball tip images a cap as one of the same height on a sphere of R_c + R (its base
    // half-width √(a² + 2hR) = 53.85 nm, §3 test value). Tolerances: 1e-9 (exact arithmetic), 0.005 (2 decimals).
    const { cap, flag } = tipCorrectedCap(72.5 + 10, 20, 10);
    expect(flag).toBeNull();
    expect(Math.abs(cap!.baseRadiusNm - 50)).toBeLessThan(1e-9);
    expect(Math.abs(cap!.volumeNm3 - 82728.61)).toBeLessThan(0.005);
    expect(Math.abs(cap!.contactAngleDeg - 43.603)).toBeLessThan(0.0005);
    expect(Math.abs(cap!.volumeEquivalentDiameterNm - 54.061)).toBeLessThan(0.0005);
    // the imaged cap itself: base √(h(2(R_c + R) − h)) = 53.85 nm (§3)
    const imaged = tipCorrectedCap(82.5, 20, 0);
    expect(imaged.flag).toBe('no_tip_radius');
    expect(Math.abs(imaged.cap!.baseRadiusNm - 53.85)).toBeLessThan(0.005);
  });

  it('flags a tip wider than the image and an overhanging cap', () => {
    expect(tipCorrectedCap(8, 5, 10)).toEqual({ cap: null, flag: 'tip_exceeds_image' });
    // R_c = 25 − 10 = 15 < h = 20: θ > 90°
    expect(tipCorrectedCap(25, 20, 10)).toEqual({ cap: null, flag: 'overhang' });
    expect(() => tipCorrectedCap(10, 0, 1)).toThrow(RangeError);
  });
});

describe('measureVesicle on tip-dilated caps', () => {
  it('recovers the §2/§3 cap (a = 50, h = 20 nm) through a 10 nm tip, with noise', () => {
    // Rendered by dilation on a 0.5 nm grid, 2 nm AFM pixels, 0.15 nm noise, threshold 0.5 nm.
    // Tolerances: base radius 3% and volume 6% (the sphere is fitted to ~600 noisy pixels; the dilation on a 0.5 nm
    // grid misses the true maximum by up to slope × 0.25 nm); height 0.3 nm (twice the noise); angle 1.5°.
    const image = tipImage({ sizePx: 80, pixelSizeNm: 2, caps: [{ xNm: 80.6, yNm: 79.2, baseRadiusNm: 50, heightNm: 20 }], tipRadiusNm: 10, noiseSigmaNm: 0.15 });
    const [m, ...rest] = measureAll(image, 2, 0.5, 10);
    expect(rest).toHaveLength(0);
    const truth = sphericalCap(50, 20); // docs/references.md §2: V = 82 728.61 nm³, θ = 43.603°, D_V = 54.061 nm
    expect(m.capFlag).toBeNull();
    expect(m.split).toBe(false);
    expect(m.diagnostics.tipCorrected).toBe(true);
    expect(Math.abs(m.cap!.baseRadiusNm - 50) / 50).toBeLessThan(0.03);
    expect(Math.abs(m.cap!.heightNm - 20)).toBeLessThan(0.3);
    expect(Math.abs(m.cap!.contactAngleDeg - truth.contactAngleDeg)).toBeLessThan(1.5);
    expect(Math.abs(m.cap!.volumeNm3 - truth.volumeNm3) / truth.volumeNm3).toBeLessThan(0.06);
    expect(Math.abs(m.cap!.volumeEquivalentDiameterNm - 54.061) / 54.061).toBeLessThan(0.02);
    // the footprint stays tip-broadened: its extrapolated half-width is near √(a² + 2hR) = 53.85 nm (§3), 4%
    // (rim digitisation at 2 nm/px and noise at the 0.5 nm slice)
    expect(Math.abs(m.apparentBaseRadiusNm - 53.85) / 53.85).toBeLessThan(0.04);
    expect(m.footprintDiameterNm).toBeGreaterThan(2 * 50);
  });

  it('without a tip radius gives the imaged cap, flagged no_tip_radius; an impossible tip is flagged', () => {
    // Same scene: the uncorrected base is the imaged half-width √(a² + 2hR) = 53.85 nm (§3), within 3%.
    const image = tipImage({ sizePx: 80, pixelSizeNm: 2, caps: [{ xNm: 80.6, yNm: 79.2, baseRadiusNm: 50, heightNm: 20 }], tipRadiusNm: 10, noiseSigmaNm: 0.15 });
    const [raw] = measureAll(image, 2, 0.5, 0);
    expect(raw.capFlag).toBe('no_tip_radius');
    expect(Math.abs(raw.cap!.baseRadiusNm - 53.85) / 53.85).toBeLessThan(0.03);
    expect(raw.diagnostics.tipCorrected).toBe(false);
    const [huge] = measureAll(image, 2, 0.5, 500);
    expect(huge.capFlag).toBe('tip_exceeds_image');
    expect(huge.cap).toBeNull();
  });

  it('corrects a small, steep vesicle (a = 25, h = 15 nm) through an 8 nm tip', () => {
    // θ = 2·atan(15/25) = 61.93° (§2 relation). Tolerances 6% on a (about 140 pixels of 1.5 nm), 3° on θ.
    const image = tipImage({ sizePx: 60, pixelSizeNm: 1.5, caps: [{ xNm: 45.3, yNm: 44.1, baseRadiusNm: 25, heightNm: 15 }], tipRadiusNm: 8, noiseSigmaNm: 0.15, seed: 9 });
    const [m] = measureAll(image, 1.5, 0.5, 8);
    expect(m.capFlag).toBeNull();
    expect(Math.abs(m.cap!.baseRadiusNm - 25) / 25).toBeLessThan(0.06);
    expect(Math.abs(m.cap!.contactAngleDeg - 61.93)).toBeLessThan(3);
  });

  it('flags the two vesicles of a touching pair as split and still sizes each from its surface', () => {
    // Two a = 40, h = 16 nm caps 70 nm apart (bases overlap by 10 nm) and a lone one. The watershed cuts the pair at
    // the saddle, so their footprints are short, but the fitted sphere uses only the surface: a within 6%.
    const caps = [
      { xNm: 60, yNm: 60, baseRadiusNm: 40, heightNm: 16 },
      { xNm: 130, yNm: 60, baseRadiusNm: 40, heightNm: 16 },
      { xNm: 95, yNm: 150, baseRadiusNm: 40, heightNm: 16 },
    ];
    const image = tipImage({ sizePx: 100, pixelSizeNm: 2, caps, tipRadiusNm: 8, noiseSigmaNm: 0.15, seed: 5 });
    const ms = measureAll(image, 2, 0.5, 8);
    expect(ms).toHaveLength(3);
    const byX = (a: { centroidPx: { x: number } }, b: { centroidPx: { x: number } }) => a.centroidPx.x - b.centroidPx.x;
    const pair = ms.filter((m) => m.centroidPx.y < 45).sort(byX);
    const lone = ms.find((m) => m.centroidPx.y > 45)!;
    expect(pair.map((m) => m.split)).toEqual([true, true]);
    expect(lone.split).toBe(false);
    for (const m of [...pair, lone]) {
      expect(m.capFlag).toBeNull();
      expect(Math.abs(m.cap!.baseRadiusNm - 40) / 40).toBeLessThan(0.06);
    }
  });

  it('flags an overhanging object (θ > 90°) and a flat-topped one', () => {
    // A cap of a = 20, h = 30 nm (R_c = 21.67 nm < h, θ = 112.6°) through a 5 nm tip: its image is the top of a
    // 26.67 nm sphere on near-vertical walls, and the corrected sphere is smaller than the height.
    const steep = tipImage({ sizePx: 50, pixelSizeNm: 2, caps: [{ xNm: 50, yNm: 50, baseRadiusNm: 20, heightNm: 30 }], tipRadiusNm: 5, noiseSigmaNm: 0.15 });
    const [o] = measureAll(steep, 2, 0.5, 5);
    expect(o.capFlag).toBe('overhang');
    expect(o.cap).toBeNull();
    // a 10 nm plateau of radius 15 px with noise: no cap
    const size = 50;
    const data = new Float32Array(size * size);
    const rng = createRng(4);
    for (let i = 0; i < data.length; i++) {
      const x = i % size, y = Math.floor(i / size);
      data[i] = ((x - 25) ** 2 + (y - 25) ** 2 <= 225 ? 10 : 0) + 0.15 * rng.normal();
    }
    const [flat] = measureAll({ data, width: size, height: size }, 2, 0.5, 5);
    expect(flat.capFlag).toBe('cap_fit_failed');
    expect(flat.cap).toBeNull();
  });
});

describe('fitSphericalCap', () => {
  it('fits the sphere of a noise-free sampled cap exactly and leaves its inputs alone', () => {
    // Heights sampled from a sphere of radius 72.5 nm, apex 20 nm (§2 cap) at 2 nm/px: the orthogonal fit must
    // return it to 1e-6 nm (float32 heights carry ~1e-6 relative rounding).
    const size = 70;
    const data = new Float32Array(size * size);
    const labels = new Int32Array(size * size);
    for (let i = 0; i < data.length; i++) {
      const d2 = ((i % size) - 35.4) ** 2 * 4 + (Math.floor(i / size) - 34.8) ** 2 * 4;
      const z = Math.sqrt(72.5 ** 2 - Math.min(d2, 72.5 ** 2)) - 52.5;
      if (z > 0.5) { data[i] = z; labels[i] = 2; }
    }
    const before = Float32Array.from(data);
    const fit = fitSphericalCap({ data, width: size, height: size }, labels, { label: 2, areaPx: 0, maxHeightNm: 20, peakPx: { x: 35, y: 35 }, split: false, xMin: 0, yMin: 0, xMax: 69, yMax: 69 }, 2, { minHeightNm: 0.5 });
    expect(Math.abs(fit.sphereRadiusNm - 72.5)).toBeLessThan(1e-3);
    expect(Math.abs(fit.apexHeightNm - 20)).toBeLessThan(1e-4);
    expect(Math.hypot(fit.centrePx.x - 35.4, fit.centrePx.y - 34.8)).toBeLessThan(1e-4);
    expect(data).toEqual(before);
  });

  it('throws cap_fit_failed for too few pixels', () => {
    const data = new Float32Array(25).fill(0);
    const labels = new Int32Array(25);
    data[12] = 5; labels[12] = 1;
    expect(() => fitSphericalCap({ data, width: 5, height: 5 }, labels, { label: 1, areaPx: 1, maxHeightNm: 5, peakPx: { x: 2, y: 2 }, split: false, xMin: 2, yMin: 2, xMax: 2, yMax: 2 }, 1))
      .toThrowError(expect.objectContaining({ code: 'cap_fit_failed' }));
  });
});
