import { medianSorted } from 'simple-statistics';
import type { Point, Raster } from '../types';
import { AnalysisError } from '../errors';
import { gaussianPixelFraction } from './gaussianPixelFraction';

/** Options of {@link aperturePhotometry}. */
export interface AperturePhotometryOptions {
  /** PSF standard deviation (px); sets the default radii and the enclosed-fraction correction. Required. */
  sigmaPx: number;
  /**
   * Aperture radius (px).
   * @default 2·sigmaPx
   */
  radiusPx?: number;
  /**
   * Inner radius of the background annulus (px). 3σ leaves ≈ 1 % of a Gaussian's light outside it.
   * @default max(radiusPx + 1, 3·sigmaPx)
   */
  annulusInnerPx?: number;
  /**
   * Outer radius of the background annulus (px).
   * @default annulusInnerPx + max(3, 2·sigmaPx)
   */
  annulusOuterPx?: number;
  /**
   * Sub-samples per pixel side for pixels cut by the aperture edge.
   * @default 16
   */
  subsamples?: number;
  /**
   * Camera gain (counts per photon), for the shot-noise term.
   * @default 1
   */
  gainCountsPerPhoton?: number;
}

/** Result of {@link aperturePhotometry}. */
export interface AperturePhotometryResult {
  /** Aperture sum minus annulus median × aperture area (counts). */
  readonly netCounts: number;
  /** netCounts divided by the PSF fraction the aperture encloses: an estimate of the spot's total (counts). */
  readonly totalCounts: number;
  /**
   * Fraction of a pixel-integrated Gaussian PSF (σ = sigmaPx) centred on `point` that the weighted in-frame
   * aperture collects: Σ weight × pixel fraction. It also corrects for the part of the aperture outside the frame.
   */
  readonly enclosedFraction: number;
  /** Noise SD of netCounts: shot noise of the net signal, pixel noise over the aperture, error of the median (counts). */
  readonly noiseCounts: number;
  /** netCounts / noiseCounts. */
  readonly snr: number;
  /** Median of the annulus, the local background per pixel (counts). */
  readonly backgroundPerPxCounts: number;
  /** Robust SD (1.4826·MAD) of the annulus pixels (counts). */
  readonly backgroundSigmaCounts: number;
  /** In-frame aperture area (px²) and annulus pixel count. */
  readonly apertureAreaPx: number;
  readonly nbAnnulusPx: number;
  /** True when the aperture or the annulus reaches outside the frame: the values then use the in-frame part. */
  readonly leavesFrame: boolean;
}

/**
 * Circular aperture photometry with a local annulus background.
 *
 * Pixels wholly inside the circle weigh 1; pixels cut by its edge weigh the fraction of an n×n sub-sample grid
 * that falls inside. Noise² = g·max(net, 0) + A·s² + (π/2)·A²·s²/n_ann, with A the aperture area, s the annulus
 * robust SD and π/2 the variance ratio of a median to a mean for Gaussian data (common practice).
 *
 * @param raster - frame (counts; the camera offset may remain, the annulus removes it); not modified
 * @param point - aperture centre (px of this frame)
 * @param options - see {@link AperturePhotometryOptions}
 * @returns net and total counts, noise, SNR and diagnostics
 * @throws AnalysisError `aperture_outside_frame` when no aperture pixel is in the frame,
 *   `annulus_empty` when fewer than 3 annulus pixels are; RangeError for bad radii
 * @see Howell SB. Two-dimensional aperture photometry: signal-to-noise ratio of point-source observations.
 *   PASP 101:616–622, 1989 (from memory).
 */
export function aperturePhotometry(
  raster: Raster,
  point: Point,
  options: AperturePhotometryOptions,
): AperturePhotometryResult {
  const { sigmaPx } = options;
  if (!(sigmaPx > 0)) throw new RangeError(`sigmaPx must be positive, got ${sigmaPx}`);
  const {
    radiusPx = 2 * sigmaPx,
    annulusInnerPx = Math.max(radiusPx + 1, 3 * sigmaPx),
    annulusOuterPx = annulusInnerPx + Math.max(3, 2 * sigmaPx),
    subsamples = 16,
    gainCountsPerPhoton = 1,
  } = options;
  if (!(radiusPx > 0 && annulusInnerPx >= radiusPx && annulusOuterPx > annulusInnerPx)) {
    throw new RangeError(
      `need 0 < radiusPx ≤ annulusInnerPx < annulusOuterPx, got ${radiusPx}, ${annulusInnerPx}, ${annulusOuterPx}`,
    );
  }
  const { width, height, data } = raster;
  const { x: px, y: py } = point;

  // aperture sum with fractional edge pixels
  const halfDiag = Math.SQRT1_2;
  let sum = 0;
  let area = 0;
  let leavesFrame = false;
  let enclosedFraction = 0;
  const xMin = Math.floor(px - annulusOuterPx);
  const xMax = Math.ceil(px + annulusOuterPx);
  const yMin = Math.floor(py - annulusOuterPx);
  const yMax = Math.ceil(py + annulusOuterPx);
  const annulus: number[] = [];
  const r2In = annulusInnerPx * annulusInnerPx;
  const r2Out = annulusOuterPx * annulusOuterPx;
  for (let y = yMin; y <= yMax; y++) {
    for (let x = xMin; x <= xMax; x++) {
      const d = Math.hypot(x - px, y - py);
      const inFrame = x >= 0 && x < width && y >= 0 && y < height;
      let w = 0;
      if (d + halfDiag <= radiusPx) w = 1;
      else if (d - halfDiag < radiusPx) w = coveredFraction(x - px, y - py, radiusPx, subsamples);
      if (w > 0) {
        if (!inFrame) {
          leavesFrame = true;
          continue;
        }
        sum += w * data[y * width + x];
        area += w;
        enclosedFraction += w * gaussianPixelFraction(x - px, y - py, sigmaPx);
      }
      const d2 = d * d;
      if (d2 >= r2In && d2 <= r2Out) {
        if (inFrame) annulus.push(data[y * width + x]);
        else leavesFrame = true;
      }
    }
  }
  if (area === 0) {
    throw new AnalysisError('aperture_outside_frame', `aperture at (${px}, ${py}) has no pixel inside the ${width}×${height} frame`, {
      x: px,
      y: py,
      width,
      height,
    });
  }
  if (annulus.length < 3) {
    throw new AnalysisError('annulus_empty', `background annulus at (${px}, ${py}) has ${annulus.length} in-frame pixels; need at least 3`, {
      nbAnnulusPx: annulus.length,
    });
  }

  // background and noise
  annulus.sort((a, b) => a - b);
  const background = medianSorted(annulus);
  const deviations = annulus.map((v) => Math.abs(v - background)).sort((a, b) => a - b);
  const sigma = 1.4826 * medianSorted(deviations);
  const netCounts = sum - background * area;
  const variance =
    gainCountsPerPhoton * Math.max(netCounts, 0) +
    area * sigma * sigma +
    ((Math.PI / 2) * area * area * sigma * sigma) / annulus.length;
  const noiseCounts = Math.sqrt(variance);
  return {
    netCounts,
    totalCounts: netCounts / enclosedFraction,
    enclosedFraction,
    noiseCounts,
    snr: noiseCounts > 0 ? netCounts / noiseCounts : 0,
    backgroundPerPxCounts: background,
    backgroundSigmaCounts: sigma,
    apertureAreaPx: area,
    nbAnnulusPx: annulus.length,
    leavesFrame,
  };
}

function coveredFraction(dx: number, dy: number, radius: number, n: number): number {
  const r2 = radius * radius;
  let inside = 0;
  for (let j = 0; j < n; j++) {
    const sy = dy - 0.5 + (j + 0.5) / n;
    for (let i = 0; i < n; i++) {
      const sx = dx - 0.5 + (i + 0.5) / n;
      if (sx * sx + sy * sy <= r2) inside++;
    }
  }
  return inside / (n * n);
}


