import { describe, expect, it } from 'vitest';
import { AnalysisError } from '../../errors';
import { makeHeightScene } from '../makeHeightScene';
import { countDifferences } from '../../heightmap/__tests__/countDifferences';

describe('makeHeightScene', () => {
  it('is reproducible from its seed', () => {
    const a = makeHeightScene({ seed: 5, width: 64, height: 64, nbVesicles: 3, baseRadiusRangeNm: [20, 30] });
    const b = makeHeightScene({ seed: 5, width: 64, height: 64, nbVesicles: 3, baseRadiusRangeNm: [20, 30] });
    const c = makeHeightScene({ seed: 6, width: 64, height: 64, nbVesicles: 3, baseRadiusRangeNm: [20, 30] });
    expect(countDifferences(b.raster.data, a.raster.data)).toBe(0);
    expect(b.truth).toEqual(a.truth);
    expect(c.truth).not.toEqual(a.truth);
  });

  it('draws a cap whose apex equals h and whose profile follows the sphere of radius (a² + h²)/2h', () => {
    // docs/references.md §2: R_c = (a² + h²)/(2h). A cap centred on a pixel: the apex pixel is exactly h;
    // at ρ = 20 nm the surface is √(R² − ρ²) − (R − h). Tolerance 1e-4 nm: Float32 storage of ~20 nm values.
    const s = makeHeightScene({ width: 64, height: 64, pixelSizeNm: 5, vesicles: [{ xPx: 32, yPx: 32, baseRadiusNm: 50, heightNm: 20 }], noiseSigmaNm: 0, lineOffsetSigmaNm: 0, tiltXNmPerPx: 0, tiltYNmPerPx: 0, offsetNm: 0 });
    const R = (50 * 50 + 20 * 20) / (2 * 20);
    expect(s.topography.data[32 * 64 + 32]).toBeCloseTo(20, 4);
    expect(s.topography.data[32 * 64 + 36]).toBeCloseTo(Math.sqrt(R * R - 400) - (R - 20), 4);
    expect(s.topography.data[32 * 64 + 42]).toBe(0); // ρ = 50 nm = a: on the rim
  });

  it('adds the tilt, offsets and noise it reports', () => {
    // raster − topography − plane − line offset must be white noise of the given SD: check the SD
    // within 3% (SE of an SD from n = 65 536 samples is 1/√(2n) = 0.28%; 3% also covers Float32 rounding).
    const s = makeHeightScene({ seed: 3, width: 256, height: 256, nbVesicles: 5, noiseSigmaNm: 0.2, tiltXNmPerPx: 0.03, tiltYNmPerPx: 0.01, offsetNm: 2 });
    let s2 = 0;
    for (let y = 0; y < 256; y++) {
      for (let x = 0; x < 256; x++) {
        const i = y * 256 + x;
        const r = s.raster.data[i] - s.topography.data[i] - 2 - 0.03 * (x - 127.5) - 0.01 * (y - 127.5) - s.lineOffsetsNm[y];
        s2 += r * r;
      }
    }
    expect(Math.abs(Math.sqrt(s2 / 65536) - 0.2)).toBeLessThan(0.03 * 0.2);
  });

  it('throws scene_too_crowded when features cannot fit', () => {
    try {
      makeHeightScene({ width: 32, height: 32, nbVesicles: 50, baseRadiusRangeNm: [40, 40] });
      expect.unreachable();
    } catch (e) {
      expect(e).toBeInstanceOf(AnalysisError);
      expect((e as AnalysisError).code).toBe('scene_too_crowded');
    }
  });
});
