import { describe, expect, it } from 'vitest';
import { createRng } from '../../synthetic/random';
import { makeHeightScene } from '../../synthetic/makeHeightScene';
import { measureVesicle } from '../measureVesicle';
import { sphericalCap } from '../sphericalCap';
import type { DetectedRegion } from '../types';

/** A flat-topped digitised disk (pixel centres within r of (cx, cy)) of height 10 nm, label 1. */
function disk(size: number, cx: number, cy: number, rPx: number) {
  const data = new Float32Array(size * size);
  const labels = new Int32Array(size * size);
  let xMin = size, yMin = size, xMax = -1, yMax = -1;
  for (let y = 0; y < size; y++) {
    for (let x = 0; x < size; x++) {
      if ((x - cx) ** 2 + (y - cy) ** 2 <= rPx * rPx) {
        data[y * size + x] = 10;
        labels[y * size + x] = 1;
        xMin = Math.min(xMin, x); xMax = Math.max(xMax, x); yMin = Math.min(yMin, y); yMax = Math.max(yMax, y);
      }
    }
  }
  const region: DetectedRegion = { label: 1, areaPx: 0, maxHeightNm: 10, peakPx: { x: Math.round(cx), y: Math.round(cy) }, split: false, xMin, yMin, xMax, yMax };
  return { raster: { data, width: size, height: size }, labels, region };
}

describe('measureVesicle', () => {
  it('a digitised disk of radius r has area ≈ πr²', () => {
    // Analytic: area of a disk πr² (STYLE §6 check). Each count lies within Gauss's lattice bound
    // π(r − √2/2)² ≤ N ≤ π(r + √2/2)² (every counted unit square lies in the disk grown by half a diagonal);
    // averaged over uniformly random sub-pixel centres the expected count is exactly πr², so the mean of
    // 40 placements must be within 0.5% (spread of a single count is ~ a few px here, SE of the mean < 0.2%).
    const rng = createRng(12);
    const pixelSizeNm = 4;
    for (const r of [6, 15, 30]) {
      let sum = 0;
      const nb = 40;
      for (let k = 0; k < nb; k++) {
        const cx = 40 + rng.uniform();
        const cy = 40 + rng.uniform();
        const { raster, labels, region } = disk(81, cx, cy, r);
        const m = measureVesicle(raster, labels, region, pixelSizeNm);
        const areaPx = m.projectedAreaNm2 / pixelSizeNm ** 2;
        expect(areaPx).toBeGreaterThanOrEqual(Math.PI * (r - Math.SQRT1_2) ** 2);
        expect(areaPx).toBeLessThanOrEqual(Math.PI * (r + Math.SQRT1_2) ** 2);
        sum += areaPx;
        // centroid of a symmetric flat disk: sub-pixel centre within 0.5 px (digitisation of the rim)
        expect(Math.hypot(m.centroidPx.x - cx, m.centroidPx.y - cy)).toBeLessThan(0.5);
      }
      expect(Math.abs(sum / nb - Math.PI * r * r) / (Math.PI * r * r)).toBeLessThan(0.005);
    }
  });

  it('circularity: a digitised disk reads ≈ 1 on average, a 2:1 ellipse clearly less', () => {
    // Perimeter = (π/4)·crack length (Cauchy–Crofton average of a Manhattan length, from memory). The crack
    // boundary of a digitised disk (orthogonally convex) is that of its bounding box, 2r ± 1 px per side
    // depending on the sub-pixel phase (derived here), so each reading lies in [(r/(r+½))², (r/(r−½))²]
    // and the mean over random phases is 1 within 2% (the spread is symmetric to first order in 1/r).
    const r = 20;
    const rng = createRng(31);
    let sum = 0;
    for (let k = 0; k < 30; k++) {
      const { raster, labels, region } = disk(61, 30 + rng.uniform(), 30 + rng.uniform(), r);
      const c = measureVesicle(raster, labels, region, 1).circularity;
      expect(c).toBeGreaterThanOrEqual((r / (r + 0.5)) ** 2 - 1e-9);
      expect(c).toBeLessThanOrEqual((r / (r - 0.5)) ** 2 + 1e-9);
      sum += c;
    }
    expect(Math.abs(sum / 30 - 1)).toBeLessThan(0.02);
    // 2:1 ellipse: Ramanujan's perimeter gives 4πA/P² = 0.841 (textbook, from memory). The estimator carries an
    // orientation bias (axis-aligned: π/4·4(a + b) is 3% short) and the ±½ px phase bias above (±5% at b = 12 px),
    // so require 0.75–0.9: about ±8% around 0.841, and below every disk reading.
    const data = new Float32Array(61 * 61);
    const lab = new Int32Array(61 * 61);
    for (let y = 0; y < 61; y++) for (let x = 0; x < 61; x++) if (((x - 30) / 24) ** 2 + ((y - 30) / 12) ** 2 <= 1) { data[y * 61 + x] = 5; lab[y * 61 + x] = 1; }
    const ell = measureVesicle({ data, width: 61, height: 61 }, lab, { label: 1, areaPx: 0, maxHeightNm: 5, peakPx: { x: 30, y: 30 }, split: false, xMin: 0, yMin: 0, xMax: 60, yMax: 60 }, 1).circularity;
    expect(ell).toBeLessThan(0.9);
    expect(ell).toBeGreaterThan(0.75);
  });

  it('measures a noise-free cap: apex, volume and the cap model', () => {
    // Cap a = 50, h = 20 nm (docs/references.md §2: V = 82 728.61 nm³, θ = 43.603°) at 2 nm/px, centred off-grid.
    // Apex: quadratic fit near the top, bias < r⁴/(8R_c³) ≈ 0.004 nm over the ±4 nm window → tolerance 0.01 nm.
    // Volume: midpoint sum at 2 nm/px of a smooth cap; truncated below the 0.5 nm slice (≈ 0.4% of V) → 1.5%.
    // Base radius from the slice at 0.5 nm (docs/references.md §2 relation), ±½ px rim digitisation → 3%.
    const scene = makeHeightScene({ width: 80, height: 80, pixelSizeNm: 2, vesicles: [{ xPx: 40.3, yPx: 39.6, baseRadiusNm: 50, heightNm: 20 }], noiseSigmaNm: 0, lineOffsetSigmaNm: 0, tiltXNmPerPx: 0, tiltYNmPerPx: 0, offsetNm: 0 });
    const topo = scene.topography;
    const labels = new Int32Array(topo.data.length);
    let xMin = 80, yMin = 80, xMax = 0, yMax = 0;
    for (let i = 0; i < labels.length; i++) if (topo.data[i] > 0.5) { labels[i] = 7; const x = i % 80, y = Math.floor(i / 80); xMin = Math.min(xMin, x); xMax = Math.max(xMax, x); yMin = Math.min(yMin, y); yMax = Math.max(yMax, y); }
    const region: DetectedRegion = { label: 7, areaPx: 0, maxHeightNm: 20, peakPx: { x: 40, y: 40 }, split: false, xMin, yMin, xMax, yMax };
    const m = measureVesicle(topo, labels, region, 2, { thresholdNm: 0.5 });
    const truth = sphericalCap(50, 20);
    expect(Math.abs(m.apexHeightNm - 20)).toBeLessThan(0.01);
    expect(m.maxHeightNm).toBeLessThanOrEqual(20);
    expect(Math.abs(m.volumeNm3 - truth.volumeNm3) / truth.volumeNm3).toBeLessThan(0.015);
    expect(Math.abs(m.cap!.baseRadiusNm - 50) / 50).toBeLessThan(0.03);
    expect(Math.abs(m.cap!.contactAngleDeg - truth.contactAngleDeg)).toBeLessThan(1.5); // follows from the 3% on a
    expect(Math.hypot(m.centroidPx.x - 40.3, m.centroidPx.y - 39.6)).toBeLessThan(0.05);
    expect(m.diagnostics.apexFit).toBe('quadratic');
  });

  it('throws empty_region for a label absent from the map', () => {
    const { raster, labels, region } = disk(21, 10, 10, 4);
    expect(() => measureVesicle(raster, labels, { ...region, label: 99 }, 1)).toThrowError(expect.objectContaining({ code: 'empty_region' }));
  });
});
