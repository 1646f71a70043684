import { describe, expect, it } from 'vitest';
import { countDifferences } from './countDifferences';
import { makeHeightScene } from '../../synthetic/makeHeightScene';
import type { SceneTruth } from '../../synthetic/types';
import { analyzeHeightMap } from '../analyzeHeightMap';
import { detectVesicles } from '../detectVesicles';
import { levelHeightMap } from '../levelHeightMap';
import type { MeasureVesicleResult } from '../types';

function nearest(found: readonly MeasureVesicleResult[], t: SceneTruth): { v: MeasureVesicleResult; distPx: number } {
  let best = found[0];
  let bestD = Infinity;
  for (const v of found) {
    const d = Math.hypot(v.centroidPx.x - t.xPx, v.centroidPx.y - t.yPx);
    if (d < bestD) {
      bestD = d;
      best = v;
    }
  }
  return { v: best, distPx: bestD };
}

describe('detectVesicles on synthetic scenes (tilt + line offsets + 0.15 nm noise, levelled first)', () => {
  it.each([1, 2, 3])('seed %d: counts separated vesicles exactly, heights within 0.3 nm, centroids within 0.3 px', (seed) => {
    // Acceptance criteria of the product brief. Ground truth from makeHeightScene (spherical caps, docs/references.md §2).
    // Apex height tolerance 0.3 nm = 2σ of the noise; the quadratic apex fit averages ~25 px, so its SE is
    // ≈ 0.15·√(6/25) ≈ 0.07 nm plus < 0.05 nm sphere-vs-paraboloid bias. Centroid tolerance 0.3 px (brief).
    const scene = makeHeightScene({ seed, width: 256, height: 256, pixelSizeNm: 5, nbVesicles: 15 });
    const copy = scene.raster.data.slice();
    const r = analyzeHeightMap(scene.raster, 5);
    expect(countDifferences(scene.raster.data, copy)).toBe(0);
    const truth = scene.truth.filter((t) => t.kind === 'vesicle');
    expect(r.vesicles.length).toBe(truth.length);
    const matched = new Set<number>();
    for (const t of truth) {
      const { v, distPx } = nearest(r.vesicles, t);
      matched.add(v.label);
      expect(distPx).toBeLessThan(0.3);
      expect(Math.abs(v.apexHeightNm - t.heightNm)).toBeLessThan(0.3);
      // The highest pixel is the maximum of several noisy samples near the apex, so it reads high;
      // allow 4σ = 0.6 nm (common practice: extreme of ~10 Gaussian samples stays below +3σ).
      expect(Math.abs(v.maxHeightNm - t.heightNm)).toBeLessThan(0.6);
      // Cap base radius from the sphere fitted to the surface (docs/references.md §2 relation a² + h² = 2hR_c; no
      // tip here, so flagged no_tip_radius): ~300 px of 0.15 nm noise; 5% as for the earlier footprint estimate.
      expect(Math.abs(v.cap!.baseRadiusNm - t.baseRadiusNm) / t.baseRadiusNm).toBeLessThan(0.05);
    }
    expect(matched.size).toBe(truth.length); // one detection per vesicle
  });

  it('splits overlapping pairs into two and keeps their centroids', () => {
    // Two pairs whose footprints overlap (centre distance 0.8 and 0.9 of a₁ + a₂): the saddle is far below
    // both apices, so the watershed must keep two basins each. Centroid tolerance 0.5 px: each basin is
    // cut at the watershed line, which removes a sliver of the other cap's skirt (measured ≤ 0.1 px).
    const vesicles = [
      { xPx: 50, yPx: 50, baseRadiusNm: 50, heightNm: 20 },
      { xPx: 66, yPx: 50, baseRadiusNm: 50, heightNm: 20 },
      { xPx: 100, yPx: 100, baseRadiusNm: 60, heightNm: 25 },
      { xPx: 118, yPx: 100, baseRadiusNm: 40, heightNm: 12 },
    ];
    const scene = makeHeightScene({ seed: 4, width: 160, height: 150, pixelSizeNm: 5, vesicles });
    const r = analyzeHeightMap(scene.raster, 5);
    expect(r.vesicles.length).toBe(4);
    expect(r.detection.diagnostics.nbSplits).toBe(2);
    for (const t of scene.truth) expect(nearest(r.vesicles, t).distPx).toBeLessThan(0.5);
    // without the prominence criterion (huge minProminenceNm) each pair is one region
    const merged = analyzeHeightMap(scene.raster, 5, { detect: { minProminenceNm: 1000 } });
    expect(merged.vesicles.length).toBe(2);
    // peaks 16 and 18 px apart (± 1–2 px: near the apex the cap is flatter than the noise) merge when the
    // minimum separation is well above that distance, and stay apart when it is well below
    expect(analyzeHeightMap(scene.raster, 5, { detect: { minSeparationPx: 10 } }).vesicles.length).toBe(4);
    expect(analyzeHeightMap(scene.raster, 5, { detect: { minSeparationPx: 25 } }).vesicles.length).toBe(2);
  });

  it('drops regions that touch the border and keeps them when asked', () => {
    const scene = makeHeightScene({
      seed: 5, width: 120, height: 120, pixelSizeNm: 5,
      vesicles: [{ xPx: 2, yPx: 60, baseRadiusNm: 40, heightNm: 15 }, { xPx: 60, yPx: 60, baseRadiusNm: 40, heightNm: 15 }, { xPx: 80, yPx: 118.5, baseRadiusNm: 30, heightNm: 10 }],
    });
    const r = analyzeHeightMap(scene.raster, 5);
    expect(r.vesicles.length).toBe(1);
    expect(nearest(r.vesicles, scene.truth[1]).distPx).toBeLessThan(0.3);
    expect(r.detection.diagnostics.nbDroppedEdge).toBeGreaterThanOrEqual(2);
    const kept = analyzeHeightMap(scene.raster, 5, { detect: { dropEdgeRegions: false } });
    expect(kept.vesicles.length).toBe(3);
  });

  it('reports beads taller than beadMinHeightNm as fiducial candidates, not vesicles', () => {
    // Beads 400 nm (default) and 350 nm against the 300 nm cut-off (EVs on mica ≤ 100 nm: common practice).
    const scene = makeHeightScene({
      seed: 6, width: 256, height: 256, pixelSizeNm: 5, nbVesicles: 8,
      beads: [{ xPx: 60, yPx: 60 }, { xPx: 190, yPx: 190, heightNm: 350 }],
    });
    const r = analyzeHeightMap(scene.raster, 5);
    expect(r.vesicles.length).toBe(8);
    expect(r.fiducialCandidates.length).toBe(2);
    for (const b of scene.truth.filter((t) => t.kind === 'bead')) {
      const { v, distPx } = nearest(r.fiducialCandidates, b);
      expect(distPx).toBeLessThan(0.3);
      // bead apex: a sphere top, fitted like a cap; 0.3 nm as for vesicles
      expect(Math.abs(v.apexHeightNm - b.heightNm)).toBeLessThan(0.3);
    }
    for (const v of r.vesicles) expect(v.maxHeightNm).toBeLessThan(300);
    // labels: each region's label appears in the map, and only those labels
    const labels = new Set(r.labels);
    expect([...labels].filter((l) => l !== 0).sort((a, b) => a - b)).toEqual([...r.vesicles, ...r.fiducialCandidates].map((v) => v.label).sort((a, b) => a - b));
  });

  it('gives the same count with an Otsu or a manual threshold on a bead-free scene', () => {
    // Otsu 1979 split of a levelled map (background ≈ 0 nm vs vesicles 8–30 nm) lands between the classes;
    // every vesicle apex (≥ 8 nm) stays above it, so the count must not change. Manual 1 nm likewise.
    const scene = makeHeightScene({ seed: 8, width: 256, height: 256, pixelSizeNm: 5, nbVesicles: 12 });
    const otsu = analyzeHeightMap(scene.raster, 5, { threshold: { method: 'otsu' } });
    expect(otsu.threshold.method).toBe('otsu');
    expect(otsu.threshold.thresholdNm).toBeGreaterThan(0.45);
    expect(otsu.vesicles.length).toBe(12);
    const manual = analyzeHeightMap(scene.raster, 5, { threshold: { method: 'manual', thresholdNm: 1 } });
    expect(manual.vesicles.length).toBe(12);
  });

  it('labels components first and floods only those that can split: a hand-made map', () => {
    // 20 × 14 px, background 0 nm, threshold 0.5 nm, default filters (area ≥ 9 px, height ≥ 2 nm, no edge contact).
    // Five 8-connected components, worked out by hand:
    //  A speck, 2 × 2 px at 1 nm          → one region (flat), dropped as small
    //  B 3 × 3 px at 5 nm on the left edge  → one region, dropped for the edge
    //  C bar 10 × 4 px at 3 nm with cones peaking at (9, 5) 12 nm and (16, 5) 10 nm: the lower peak rises 7 nm above
    //    the 3 nm saddle and lies 7 px away → two basins (one split), 40 px in all
    //  D 4 × 3 px at 1.5 nm                 → one region, dropped as low
    //  E plateau 4 × 3 px at 6 nm           → one region; its first flooded pixel is its first in raster order, (12, 10)
    // Kept regions are labelled in raster order of their first flooded pixel: (9, 5), (16, 5), (12, 10).
    const width = 20;
    const height = 14;
    const data = new Float32Array(width * height);
    const set = (x0: number, x1: number, y0: number, y1: number, h: (x: number, y: number) => number) => {
      for (let y = y0; y <= y1; y++) for (let x = x0; x <= x1; x++) data[y * width + x] = h(x, y);
    };
    set(3, 4, 3, 4, () => 1);
    set(0, 2, 6, 8, () => 5);
    const cone = (x: number, y: number, cx: number, cy: number, top: number) => Math.max(0, top - 2.5 * Math.hypot(x - cx, y - cy));
    set(8, 17, 4, 7, (x, y) => 3 + cone(x, y, 9, 5, 9) + cone(x, y, 16, 5, 7));
    set(3, 6, 10, 12, () => 1.5);
    set(12, 15, 10, 12, () => 6);
    const r = detectVesicles({ data, width, height }, { thresholdNm: 0.5 });
    expect(r.diagnostics).toEqual({ thresholdNm: 0.5, nbForegroundPx: 4 + 9 + 40 + 12 + 12, nbRegions: 6, nbSplits: 1, nbDroppedEdge: 1, nbDroppedSmall: 1, nbDroppedLow: 1 });
    expect(r.fiducialCandidates).toEqual([]);
    const [c1, c2, e] = r.vesicles;
    expect(r.vesicles.map((v) => [v.label, v.peakPx.x, v.peakPx.y, v.maxHeightNm])).toEqual([[1, 9, 5, 12], [2, 16, 5, 10], [3, 12, 10, 6]]);
    expect(c1.areaPx + c2.areaPx).toBe(40);
    expect([c1.xMin, c1.yMin, c1.yMax, c2.xMax, c2.yMin, c2.yMax]).toEqual([8, 4, 7, 17, 4, 7]);
    expect([e.areaPx, e.xMin, e.xMax, e.yMin, e.yMax]).toEqual([12, 12, 15, 10, 12]);
    // the label map holds exactly the kept regions' pixels
    const counts = new Map<number, number>();
    for (const l of r.labels) counts.set(l, (counts.get(l) ?? 0) + 1);
    expect(counts.get(1)).toBe(c1.areaPx);
    expect(counts.get(2)).toBe(c2.areaPx);
    expect(counts.get(3)).toBe(12);
    expect(counts.get(0)).toBe(width * height - 52);
  });

  it('finds nothing on a particle-free map and does not mutate its input', () => {
    const scene = makeHeightScene({ seed: 7, width: 128, height: 128, nbVesicles: 0 });
    const levelled = levelHeightMap(scene.raster).levelled;
    const copy = levelled.data.slice();
    const r = detectVesicles(levelled, { thresholdNm: 0.45 });
    expect(r.vesicles.length).toBe(0);
    expect(r.fiducialCandidates.length).toBe(0);
    expect(countDifferences(levelled.data, copy)).toBe(0);
    expect(() => detectVesicles(levelled, { thresholdNm: Number.NaN })).toThrow(RangeError);
  });
});
