import { describe, expect, it } from 'vitest';
import { correctBackground } from '../correctBackground';
import { renderFluorescenceScene } from '../renderFluorescenceScene';
import { createTestRng, snapshot } from './helpers';

describe('correctBackground', () => {
  const rng = createTestRng(21);
  const spots = Array.from({ length: 60 }, () => ({ x: 5 + 246 * rng.uniform(), y: 5 + 246 * rng.uniform(), photons: 2000 }));
  const slope = { x: 0.1, y: -0.05 };
  const { raster, expectedPhotons } = renderFluorescenceScene({
    widthPx: 256, heightPx: 256, sigmaPx: 1.3, spots: [], rng, backgroundPhotonsPerPx: 100,
    backgroundSlopePerPx: slope, cameraOffsetCounts: 500,
  });
  // add the spots separately so the expected background stays spot-free
  const withSpots = renderFluorescenceScene({
    widthPx: 256, heightPx: 256, sigmaPx: 1.3, spots, rng: createTestRng(22), backgroundPhotonsPerPx: 100,
    backgroundSlopePerPx: slope, cameraOffsetCounts: 500,
  }).raster;

  it('removes the camera offset and follows a sloped background between tile centres', () => {
    // Truth: the renderer's expected background (a plane, 100 ± 19 photons over the frame). Bilinear interpolation
    // reproduces a plane exactly, so the error is the tile median's noise: SE = 1.2533·10/√256 ≈ 0.8 counts for
    // 32-px tiles sampled every 2 px, plus ≤ 0.5 from medians of integer counts and ~0.3 from Poisson skew
    // (median ≈ mean − 1/3, from memory) and ~0.3 from 60 sparse spots; 3.5 counts covers ~3 SE of everything.
    const before = snapshot(withSpots);
    const { background, summary } = correctBackground(withSpots, { cameraOffsetCounts: 500, tileSizePx: 32 });
    let worst = 0;
    for (let y = 16; y < 240; y++) {
      for (let x = 16; x < 240; x++) {
        worst = Math.max(worst, Math.abs(background.data[y * 256 + x] - expectedPhotons.data[y * 256 + x]));
      }
    }
    expect(worst).toBeLessThan(3.5);
    expect(summary.gridWidth).toBe(8);
    expect(summary.cameraOffsetCounts).toBe(500);
    expect(summary.minCounts).toBeLessThan(summary.maxCounts);
    expect(withSpots.data).toEqual(before);
  });

  it('leaves zero-median residuals whose spread is the Poisson noise', () => {
    // Poisson SD at 100 photons = 10 (variance = mean, common practice). ±10 %: the MAD of integer counts is
    // quantised (6.745 → 7 gives 10.4).
    const { corrected, summary } = correctBackground(raster, { cameraOffsetCounts: 500, tileSizePx: 32 });
    const sorted = Float32Array.from(corrected.data).sort();
    expect(Math.abs(sorted[sorted.length >> 1])).toBeLessThan(1);
    expect(Math.abs(summary.residualSigmaCounts / 10 - 1)).toBeLessThan(0.1);
  });

  it('rejects a tile smaller than 4 px', () => {
    expect(() => correctBackground(raster, { tileSizePx: 2 })).toThrow(RangeError);
  });
});
