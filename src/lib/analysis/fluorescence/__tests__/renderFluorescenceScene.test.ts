import { describe, expect, it } from 'vitest';
import { renderFluorescenceScene } from '../renderFluorescenceScene';
import { createTestRng } from './helpers';

describe('renderFluorescenceScene', () => {
  const spots = [
    { x: 20.3, y: 21.7, photons: 5000 },
    { x: 40, y: 40, photons: 2000 },
  ];

  it('puts exactly the requested photons into the expected image', () => {
    // Analytic: the pixel-integrated Gaussian sums to 1 over the plane, so the expected image holds
    // background·pixels + Σ photons. Tolerance 1e-5 relative: float32 storage of ~4000 pixel values.
    const frozen = structuredClone(spots);
    const { expectedPhotons } = renderFluorescenceScene({
      widthPx: 64, heightPx: 64, sigmaPx: 1.3, spots, rng: createTestRng(1), backgroundPhotonsPerPx: 50,
    });
    const total = expectedPhotons.data.reduce((a, b) => a + b, 0);
    expect(total / (50 * 64 * 64 + 7000)).toBeCloseTo(1, 5);
    expect(spots).toEqual(frozen);
  });

  it('adds Poisson noise (variance = mean) and the camera offset, reproducibly from the seed', () => {
    // Poisson variance equals its mean (textbook, common practice). 256² pixels at mean 100: the sample variance
    // has SE ≈ 100·√(2/65536) ≈ 0.55, so ±3 counts² is over 5 SE; the mean's SE is 0.04, so ±0.3 counts.
    const options = { widthPx: 256, heightPx: 256, sigmaPx: 1.3, spots: [], backgroundPhotonsPerPx: 100, cameraOffsetCounts: 400 };
    const a = renderFluorescenceScene({ ...options, rng: createTestRng(7) }).raster.data;
    const b = renderFluorescenceScene({ ...options, rng: createTestRng(7) }).raster.data;
    const c = renderFluorescenceScene({ ...options, rng: createTestRng(8) }).raster.data;
    expect(a).toEqual(b);
    expect(a).not.toEqual(c);
    const mean = a.reduce((s, v) => s + v, 0) / a.length;
    const variance = a.reduce((s, v) => s + (v - mean) ** 2, 0) / (a.length - 1);
    expect(Math.abs(mean - 500)).toBeLessThan(0.3);
    expect(Math.abs(variance - 100)).toBeLessThan(3);
  });
});
