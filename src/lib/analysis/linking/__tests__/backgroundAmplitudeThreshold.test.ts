import { describe, expect, it } from 'vitest';
import { backgroundAmplitudeThreshold } from '../backgroundAmplitudeThreshold';
import { estimateMarkerAmplitudes } from '../estimateMarkerAmplitudes';
import { renderFluorescenceScene } from '../../fluorescence/renderFluorescenceScene';
import { createTestRng, snapshot } from '../../fluorescence/__tests__/helpers';

const SIGMA = 1.3;

describe('backgroundAmplitudeThreshold', () => {
  it('is mean + 3 SD of unconstrained PSF amplitudes at empty places, centred on 0 with the SE of the fit', () => {
    // An empty frame: 100 photons/px + offset 100 counts, Poisson noise. Amplitudes at empty places must scatter
    // around 0 with SD equal to the least-squares SE of one PSF amplitude (≥ √(100·4πσ²) ≈ 46 counts, computed from
    // Var = σ²/Σf², Σf² ≈ 1/(4πσ²)). The threshold is mean + 3 SD (docs/references.md §9, IUPAC limit of detection).
    const rng = createTestRng(51);
    const { raster } = renderFluorescenceScene({ widthPx: 200, heightPx: 200, sigmaPx: SIGMA, spots: [], rng, backgroundPhotonsPerPx: 100, cameraOffsetCounts: 100 });
    const before = snapshot(raster);
    const t = backgroundAmplitudeThreshold(raster, [], { sigmaPx: SIGMA });
    expect(t.nbControls).toBe(t.positions.length);
    expect(t.nbControls).toBeGreaterThanOrEqual(100);
    expect(t.thresholdCounts).toBeCloseTo(t.meanCounts + 3 * t.sdCounts, 9);
    // mean within 4 standard errors of 0
    expect(Math.abs(t.meanCounts)).toBeLessThan((4 * t.sdCounts) / Math.sqrt(t.nbControls));
    const fitted = estimateMarkerAmplitudes(raster, t.positions, { sigmaPx: SIGMA }).amplitudes;
    const meanSe = fitted.reduce((a, f) => a + f.stdErrCounts, 0) / fitted.length;
    expect(meanSe).toBeGreaterThan(46);
    // SD of ≥ 100 samples is known to ~7 %: allow 20 %
    expect(Math.abs(t.sdCounts / meanSe - 1)).toBeLessThan(0.2);
    // clipping at 0 (NNLS) would have put the threshold well below 3 SE: about 2.15 SE for pure noise (computed
    // from the half-normal: mean 0.399 SE, SD 0.584 SE)
    const clipped = fitted.map((f) => f.amplitudeCounts);
    const m = clipped.reduce((a, v) => a + v, 0) / clipped.length;
    const sd = Math.sqrt(clipped.reduce((a, v) => a + (v - m) ** 2, 0) / (clipped.length - 1));
    expect(m + 3 * sd).toBeLessThan(0.85 * t.thresholdCounts);
    expect(raster.data).toEqual(before);
  });

  it('keeps away from vesicles and spots and refuses a frame with too few empty places', () => {
    const rng = createTestRng(52);
    const { raster } = renderFluorescenceScene({ widthPx: 120, heightPx: 120, sigmaPx: SIGMA, spots: [{ x: 60, y: 60, photons: 5000 }], rng, backgroundPhotonsPerPx: 100 });
    const t = backgroundAmplitudeThreshold(raster, [{ x: 60, y: 60 }], { sigmaPx: SIGMA });
    for (const p of t.positions) expect(Math.hypot(p.x - 60, p.y - 60)).toBeGreaterThanOrEqual(6 * SIGMA);
    // the bright spot is avoided, so it does not inflate the threshold: ≈ 3 SE (< 250 counts), not thousands
    expect(t.thresholdCounts).toBeLessThan(250);
    const small = renderFluorescenceScene({ widthPx: 40, heightPx: 40, sigmaPx: SIGMA, spots: [], rng }).raster;
    expect(() => backgroundAmplitudeThreshold(small, [], { sigmaPx: SIGMA })).toThrow(expect.objectContaining({ code: 'too_few_background_apertures' }));
  });
});
