import { describe, expect, it } from 'vitest';
import { countDifferences } from './countDifferences';
import { AnalysisError } from '../../errors';
import { makeHeightScene } from '../../synthetic/makeHeightScene';
import { levelHeightMap } from '../levelHeightMap';
import { robustSigma } from '../robustSigma';

/** Residual of `rows` after removing its least-squares line in the row index (RMS). */
function detrendedRms(values: Float64Array): number {
  const n = values.length;
  const yc = (n - 1) / 2;
  let sv = 0;
  let syv = 0;
  let syy = 0;
  for (let y = 0; y < n; y++) {
    sv += values[y];
    syv += (y - yc) * values[y];
    syy += (y - yc) ** 2;
  }
  const mean = sv / n;
  const slope = syv / syy;
  let s2 = 0;
  for (let y = 0; y < n; y++) s2 += (values[y] - mean - slope * (y - yc)) ** 2;
  return Math.sqrt(s2 / n);
}

describe('levelHeightMap', () => {
  const scene = makeHeightScene({
    seed: 21, width: 256, height: 256, pixelSizeNm: 5, nbVesicles: 25, tiltXNmPerPx: 0.04, tiltYNmPerPx: -0.025,
    offsetNm: 12, lineOffsetSigmaNm: 0.6, noiseSigmaNm: 0.15,
  });

  it('removes tilt, offset and scan-line offsets, leaving the topography plus noise', () => {
    const copy = scene.raster.data.slice();
    const r = levelHeightMap(scene.raster);
    expect(countDifferences(scene.raster.data, copy)).toBe(0); // input untouched (STYLE §3)
    // Slopes: the x slope is estimated from ~55 000 background px of SD 0.15 nm: SE ≈ 0.15/√(n·256²/12)
    // ≈ 1e-5 nm/px. The y slope shares its degree of freedom with the random line offsets (SD 0.6 nm):
    // SE ≈ 0.6/√(256³/12) ≈ 5e-4 nm/px. Tolerances: 5 SE each.
    expect(Math.abs(r.surface.slopeXNmPerPx - 0.04)).toBeLessThan(5e-5);
    expect(Math.abs(r.surface.slopeYNmPerPx + 0.025)).toBeLessThan(2.5e-3);
    // Row offsets equal the true ones up to a line in y (absorbed by the plane): row medians of ~200
    // background px have SE 1.25·0.15/√200 ≈ 0.013 nm (median efficiency, common practice). Tolerance 3 SE.
    const diff = Float64Array.from(r.rowOffsetsNm, (v, y) => v - scene.lineOffsetsNm[y]);
    expect(detrendedRms(diff)).toBeLessThan(0.04);
    // levelled − topography is white noise of SD 0.15 nm, median 0. Tolerances: median SE
    // 1.25·0.15/√65536 ≈ 0.0007 nm → 0.01 nm also covers the residual plane error; SD within 5% (SE 0.5%).
    const err = Float32Array.from(r.levelled.data, (v, i) => v - scene.topography.data[i]);
    const e = robustSigma(err);
    expect(Math.abs(e.median)).toBeLessThan(0.01);
    expect(Math.abs(e.robustSigma - 0.15)).toBeLessThan(0.0075);
    expect(Math.abs(r.backgroundSigmaNm - 0.15)).toBeLessThan(0.0075);
    expect(r.diagnostics.nbIterations).toBeGreaterThan(1);
    expect(r.diagnostics.converged).toBe(true);
  });

  it('aligns a scan line with a large jump, even one crossing a vesicle', () => {
    // A 3 nm jump (20σ) on the row through a vesicle centre must be removed: the row's levelled error
    // (levelled − topography) has median within 0.05 nm of 0 (SE of a row median of ~256 px is 0.012 nm; common practice).
    const jumpRow = Math.round(scene.truth[0].yPx);
    const data = scene.raster.data.slice();
    for (let x = 0; x < 256; x++) data[jumpRow * 256 + x] += 3;
    const r = levelHeightMap({ data, width: 256, height: 256 });
    const err = Float32Array.from({ length: 256 }, (_, x) => r.levelled.data[jumpRow * 256 + x] - scene.topography.data[jumpRow * 256 + x]);
    expect(Math.abs(robustSigma(err).median)).toBeLessThan(0.05);
  });

  it('excludes the particles from the background', () => {
    // Every pixel of a vesicle taller than 3σ must be out of the background mask (k = 3).
    const r = levelHeightMap(scene.raster);
    let particleInBackground = 0;
    for (let i = 0; i < r.backgroundMask.length; i++) if (scene.topography.data[i] > 0.45 && r.backgroundMask[i]) particleInBackground++;
    expect(particleInBackground).toBe(0);
  });

  it('fits a bowed substrate with surface "poly2" but not with a plane', () => {
    // Bow c = 2e-4 nm/px² gives 6.5 nm at the corners. poly2 must return curvXX = curvYY = c within
    // 5e-6 nm/px² (5 SE of a quadratic term from 50 000 px of SD 0.15 nm plus line-offset leakage),
    // and the residual background SD must return to the noise level; a plane leaves > 0.3 nm.
    const bowed = makeHeightScene({ seed: 22, width: 200, height: 200, nbVesicles: 10, bowNmPerPx2: 2e-4, lineOffsetSigmaNm: 0 });
    const quad = levelHeightMap(bowed.raster, { surface: 'poly2' });
    expect(Math.abs(quad.surface.curvXXNmPerPx2 - 2e-4)).toBeLessThan(5e-6);
    expect(Math.abs(quad.surface.curvYYNmPerPx2 - 2e-4)).toBeLessThan(5e-6);
    expect(Math.abs(quad.surface.curvXYNmPerPx2)).toBeLessThan(5e-6);
    const plane = levelHeightMap(bowed.raster, { surface: 'plane', alignRows: false });
    const errQuad = robustSigma(Float32Array.from(quad.levelled.data, (v, i) => v - bowed.topography.data[i])).robustSigma;
    const errPlane = robustSigma(Float32Array.from(plane.levelled.data, (v, i) => v - bowed.topography.data[i])).robustSigma;
    expect(Math.abs(errQuad - 0.15)).toBeLessThan(0.0075);
    expect(errPlane).toBeGreaterThan(0.3);
  });

  it('throws non_finite_height for NaN samples', () => {
    const data = new Float32Array(100);
    data[42] = Number.NaN;
    try {
      levelHeightMap({ data, width: 10, height: 10 });
      expect.unreachable();
    } catch (e) {
      expect(e).toBeInstanceOf(AnalysisError);
      expect((e as AnalysisError).code).toBe('non_finite_height');
    }
  });

  it('rejects a raster whose data does not match its size', () => {
    expect(() => levelHeightMap({ data: new Float32Array(10), width: 4, height: 4 })).toThrow(RangeError);
  });
});
