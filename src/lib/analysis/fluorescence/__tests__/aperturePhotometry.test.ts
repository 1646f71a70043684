import { describe, expect, it } from 'vitest';
import { AnalysisError } from '../../errors';
import { aperturePhotometry } from '../aperturePhotometry';
import { renderFluorescenceScene } from '../renderFluorescenceScene';
import { createTestRng, snapshot } from './helpers';

const SIGMA = 1.3;

describe('aperturePhotometry', () => {
  it('recovers the total photons of a noise-free spot within 0.3 %', () => {
    // Truth: 5000 photons rendered as a pixel-integrated Gaussian. The enclosed fraction is computed from the same
    // pixel-integrated model, so what remains is the spot's own wing in the annulus: at 3σ a Gaussian is at
    // exp(−4.5) ≈ 1.1 % of its peak (analytic), which raises the annulus median by ~0.1 counts/px → < 0.3 % of the total.
    // The enclosed fraction must also agree with the usual closed form 1 − exp(−r²/2σₑ²), σₑ² = σ² + 1/12 for pixel
    // broadening (common practice), within 2 %: the closed form ignores where the spot sits within its pixel.
    for (const [x, y] of [[32, 32], [31.37, 32.81]]) {
      const { expectedPhotons } = renderFluorescenceScene({
        widthPx: 64, heightPx: 64, sigmaPx: SIGMA, spots: [{ x, y, photons: 5000 }], rng: createTestRng(1),
        backgroundPhotonsPerPx: 100,
      });
      const result = aperturePhotometry(expectedPhotons, { x, y }, { sigmaPx: SIGMA });
      expect(Math.abs(result.totalCounts / 5000 - 1)).toBeLessThan(0.003);
      expect(Math.abs(result.enclosedFraction / (1 - Math.exp(-(4 * SIGMA ** 2) / (2 * (SIGMA ** 2 + 1 / 12)))) - 1)).toBeLessThan(0.02);
      expect(Math.abs(result.backgroundPerPxCounts - 100)).toBeLessThan(0.2);
      expect(result.leavesFrame).toBe(false);
      // fractional pixel weights make the area π r² up to the lattice-counting error of a 16×16 sub-sample grid:
      // ~(perimeter in sub-samples)^(2/3) ≈ 18 of ~5400 points (Gauss circle problem, from memory) → 0.5 %.
      expect(Math.abs(result.apertureAreaPx / (Math.PI * (2 * SIGMA) ** 2) - 1)).toBeLessThan(0.005);
    }
  });

  it('recovers photons under Poisson noise and its noise estimate matches the scatter', () => {
    // 60 realisations of a 5000-photon spot over 100 photons/px. Per-measurement SD ≈ 100 counts (total scale), so the
    // mean has SE ≈ 13 (0.26 %); ±1 % allows ~3 SE plus the annulus median's upward bias on integer Poisson data
    // (median of Poisson(λ) ≈ λ + 1/3, from memory: ~7 counts over 21 px²). The scatter's SD has a sampling SE of
    // 1/√118 ≈ 9 %, so the predicted noise must agree within 30 %.
    const rng = createTestRng(5);
    const totals: number[] = [];
    const predicted: number[] = [];
    for (let i = 0; i < 60; i++) {
      const x = 20 + rng.uniform();
      const y = 20 + rng.uniform();
      const { raster } = renderFluorescenceScene({
        widthPx: 40, heightPx: 40, sigmaPx: SIGMA, spots: [{ x, y, photons: 5000 }], rng, backgroundPhotonsPerPx: 100,
      });
      const result = aperturePhotometry(raster, { x, y }, { sigmaPx: SIGMA });
      totals.push(result.totalCounts);
      predicted.push(result.noiseCounts / result.enclosedFraction);
      if (i === 0) expect(result.snr).toBeGreaterThan(20);
    }
    const mean = totals.reduce((a, b) => a + b, 0) / totals.length;
    const sd = Math.sqrt(totals.reduce((a, b) => a + (b - mean) ** 2, 0) / (totals.length - 1));
    const meanPredicted = predicted.reduce((a, b) => a + b, 0) / predicted.length;
    expect(Math.abs(mean / 5000 - 1)).toBeLessThan(0.01);
    expect(Math.abs(meanPredicted / sd - 1)).toBeLessThan(0.3);
  });

  it('subtracts a sloped background through the annulus median', () => {
    // A plane sampled on a point-symmetric annulus has its median at the centre value, and a point-symmetric
    // aperture sums to area × centre value, so the net of an empty aperture is 0 (float rounding: 1e-2 counts on
    // sums of ~2000). Off-centre, the annulus sample is asymmetric by < 1 px, so |net| < area·|slope|·1 px.
    const slope = { x: 2, y: -1.5 };
    const { expectedPhotons } = renderFluorescenceScene({
      widthPx: 64, heightPx: 64, sigmaPx: SIGMA, spots: [], rng: createTestRng(1), backgroundPhotonsPerPx: 200,
      backgroundSlopePerPx: slope,
    });
    const before = snapshot(expectedPhotons);
    const centred = aperturePhotometry(expectedPhotons, { x: 30, y: 33 }, { sigmaPx: SIGMA });
    expect(Math.abs(centred.netCounts)).toBeLessThan(1e-2);
    const off = aperturePhotometry(expectedPhotons, { x: 30.4, y: 33.3 }, { sigmaPx: SIGMA });
    expect(Math.abs(off.netCounts)).toBeLessThan(off.apertureAreaPx * Math.hypot(slope.x, slope.y));
    // With a spot on the slope, the total is still recovered within the 0.3 % of the flat case.
    const withSpot = renderFluorescenceScene({
      widthPx: 64, heightPx: 64, sigmaPx: SIGMA, spots: [{ x: 30, y: 33, photons: 4000 }], rng: createTestRng(1),
      backgroundPhotonsPerPx: 200, backgroundSlopePerPx: slope,
    }).expectedPhotons;
    const spot = aperturePhotometry(withSpot, { x: 30, y: 33 }, { sigmaPx: SIGMA });
    expect(Math.abs(spot.totalCounts / 4000 - 1)).toBeLessThan(0.003);
    expect(expectedPhotons.data).toEqual(before);
  });

  it('flags an aperture that leaves the frame and refuses one wholly outside', () => {
    const { raster } = renderFluorescenceScene({
      widthPx: 32, heightPx: 32, sigmaPx: SIGMA, spots: [], rng: createTestRng(3), backgroundPhotonsPerPx: 100,
    });
    expect(aperturePhotometry(raster, { x: 1, y: 16 }, { sigmaPx: SIGMA }).leavesFrame).toBe(true);
    expect(aperturePhotometry(raster, { x: 16, y: 16 }, { sigmaPx: SIGMA }).leavesFrame).toBe(false);
    try {
      aperturePhotometry(raster, { x: -20, y: 16 }, { sigmaPx: SIGMA });
      expect.unreachable();
    } catch (error) {
      expect(error).toBeInstanceOf(AnalysisError);
      expect((error as AnalysisError).code).toBe('aperture_outside_frame');
    }
  });
});
