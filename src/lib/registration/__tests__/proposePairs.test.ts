import { describe, expect, it } from 'vitest';
import type { Affine, Point } from '../../analysis/types';
import { applyAffine, decomposeAffine, similarityToAffine } from '../../analysis/geometry';
import { createGaussian } from '../../analysis/geometry/__tests__/randomHelpers';
import type { FieldDetection } from '../../jobs/detectionTypes';
import { proposePairs } from '../proposePairs';

const NOISE_PX = 0.05;

/**
 * An invented field: 20 beads (fiducial candidates) and 12 vesicles in a 1000 × 1000 AFM px map,
 * 16 of the vesicles' partners and every bead's partner seen as spots (Gaussian jitter σ = NOISE_PX
 * per axis), split over two channels with some emitters seen in both; 8 unpaired spots.
 */
function detection(truth: Affine, seed: number): { det: FieldDetection; beads: Point[] } {
  const { uniform, normal } = createGaussian(seed);
  const pts: Point[] = [];
  while (pts.length < 32) {
    const p = { x: 1000 * uniform(), y: 1000 * uniform() };
    if (pts.every((b) => Math.hypot(b.x - p.x, b.y - p.y) > 40)) pts.push(p);
  }
  const beads = pts.slice(0, 20);
  const vesicles = pts.slice(20);
  const seen = [...beads, ...vesicles.slice(0, 6)].map((p) => {
    const q = applyAffine(truth, p);
    return { x: q.x + NOISE_PX * normal(), y: q.y + NOISE_PX * normal(), integratedCounts: 1000, snr: 10 };
  });
  const xs = seen.map((s) => s.x);
  const ys = seen.map((s) => s.y);
  const stray = Array.from({ length: 8 }, () => ({
    x: Math.min(...xs) + (Math.max(...xs) - Math.min(...xs)) * uniform(),
    y: Math.min(...ys) + (Math.max(...ys) - Math.min(...ys)) * uniform(),
    integratedCounts: 500,
    snr: 5,
  }));
  const all = [...seen, ...stray];
  const feature = (p: Point) => ({ x: p.x, y: p.y, heightNm: 8, diameterNm: 100 });
  return {
    beads,
    det: {
      afmPixelNm: 10,
      flPixelNm: 20,
      thresholdNm: 2,
      backgroundSigmaNm: 0.3,
      fiducialCandidates: beads.map(feature),
      vesicles: vesicles.map(feature),
      spots: [
        { channelIndex: 0, marker: 'CD9', sigmaPx: 1.2, spots: all.filter((_, i) => i % 2 === 0 || i % 5 === 0) },
        { channelIndex: 1, marker: 'CD63', sigmaPx: 1.2, spots: all.filter((_, i) => i % 2 === 1 || i % 5 === 0) },
      ],
    },
  };
}

const options = { afmPixelNm: 10, flPixelNm: 20, inlierTolerancePx: 2 };

describe('proposePairs', () => {
  // invented similarity: scale 0.5 fl px per AFM px (10 nm / 20 nm pixels), 17° rotation, mirrored (inverted microscope)
  const similarity = similarityToAffine({ scalePxPerPx: 0.5, rotationDeg: 17, mirrored: true, translationXPx: 320, translationYPx: 40 });

  it('fits the chosen similarity: residuals at the noise level, equal axis scales and no shear', () => {
    const { det, beads } = detection(similarity, 11);
    const r = proposePairs(det, { ...options, model: 'similarity' });
    expect(r.model).toBe('similarity');
    // every bead proposed with its partner
    for (const b of beads) {
      const hit = r.pairs.find((p) => p.afm.x === b.x && p.afm.y === b.y);
      expect(hit).toBeDefined();
      const q = applyAffine(similarity, b);
      expect(Math.hypot(hit!.fl.x - q.x, hit!.fl.y - q.y)).toBeLessThan(5 * NOISE_PX);
    }
    // 2-D Gaussian jitter of σ per axis gives an RMS distance near σ·√2 ≈ 0.07 px (common practice);
    // no residual beyond 5σ·√2
    expect(r.rmsResidualPx).toBeGreaterThan(0.5 * NOISE_PX);
    expect(r.rmsResidualPx).toBeLessThan(2 * NOISE_PX);
    for (const p of r.pairs) expect(p.residualPx).toBeLessThan(5 * NOISE_PX * Math.SQRT2);
    // a similarity is k·R(θ)·diag(1, ±1): equal scale on both axes and no shear (Umeyama, IEEE TPAMI 13(4), 1991)
    const [a, b, , d, e] = r.flFromAfm;
    expect(Math.abs(a + e)).toBeLessThan(1e-12); // mirrored: a = −e, b = d
    expect(Math.abs(b - d)).toBeLessThan(1e-12);
    const parts = decomposeAffine(r.flFromAfm as unknown as Affine);
    expect(Math.abs(parts.scaleXPxPerPx - parts.scaleYPxPerPx)).toBeLessThan(1e-12);
    expect(Math.abs(parts.shearDeg)).toBeLessThan(1e-12);
    expect(parts.scaleXPxPerPx).toBeCloseTo(0.5, 3);
  });

  it('fits the chosen model: on a 4% anisotropic scene the affine reaches the noise level and the similarity does not', () => {
    // invented: x scale 0.50, y scale 0.52, 10° rotation
    const c = Math.cos(0.1745), s = Math.sin(0.1745);
    const anisotropic: Affine = [0.5 * c, -0.52 * s, 100, 0.5 * s, 0.52 * c, 60];
    const { det } = detection(anisotropic, 23);
    const affine = proposePairs(det, { ...options, model: 'affine' });
    expect(affine.model).toBe('affine');
    expect(affine.rmsResidualPx).toBeLessThan(2 * NOISE_PX);
    const parts = decomposeAffine(affine.flFromAfm as unknown as Affine);
    expect(parts.scaleYPxPerPx / parts.scaleXPxPerPx).toBeCloseTo(1.04, 2);
    // the best similarity misses by up to ~0.01 × 500 px = 5 px at the edges: residuals well above the jitter
    const constrained = proposePairs(det, { ...options, model: 'similarity' });
    expect(constrained.model).toBe('similarity');
    expect(constrained.rmsResidualPx).toBeGreaterThan(5 * NOISE_PX);
    const [a, b, , d, e] = constrained.flFromAfm;
    expect(Math.abs(a - e)).toBeLessThan(1e-12);
    expect(Math.abs(b + d)).toBeLessThan(1e-12);
  });

  it('defaults to the affine model', () => {
    const { det } = detection(similarity, 11);
    expect(proposePairs(det, options).model).toBe('affine');
  });
});
