import { fitSpotGaussian } from '../fluorescence/fitSpotGaussian';
import type { Point, Raster } from '../types';

/** Options of {@link fitBeadSpots}. */
export interface FitBeadSpotsOptions {
  /** Expected PSF sigma (px): the fit's starting width and the window size. */
  sigmaPx: number;
  /** How far the spot may lie from the expected place in x and in y (px). @default 3 */
  maxShiftPx?: number;
}

/** One fitted bead image, or null where no spot could be fitted (outside the frame, no light, singular fit). */
export interface BeadSpotFit {
  /** Fitted centre (px of the frame). */
  readonly x: number;
  readonly y: number;
  /** Fitted Gaussian sigma of the point-sampled model (px); it includes the bead's own size and pixel width. */
  readonly sigmaPx: number;
  /** Integrated counts above background, 2πσ²·peak (counts). */
  readonly integratedCounts: number;
  /** Peak above background over the robust SD of the window's border pixels (dimensionless). */
  readonly peakSnr: number;
  /** Fitted local background (counts per pixel, camera offset included). */
  readonly backgroundCounts: number;
}

/**
 * Fit a Gaussian spot near each expected place of a bright object (beads, or candidates for beads) in one raw frame:
 * a window of ±(3σ + maxShift) px around the place, a start at the window's brightest pixel near the place, and
 * the Levenberg–Marquardt fit of {@link fitSpotGaussian} with a free background (so the camera offset and the
 * local background need not be removed first).
 *
 * @param raster - raw frame (counts); not modified
 * @param places - expected centres (px of the frame)
 * @param options - see {@link FitBeadSpotsOptions}
 * @returns one fit per place, in order; null where it failed
 * @throws RangeError for a non-positive sigma or a negative shift
 */
export function fitBeadSpots(raster: Raster, places: readonly Point[], options: FitBeadSpotsOptions): (BeadSpotFit | null)[] {
  const { sigmaPx, maxShiftPx = 3 } = options;
  if (!(sigmaPx > 0)) throw new RangeError(`sigmaPx must be > 0, got ${sigmaPx}`);
  if (!(maxShiftPx >= 0)) throw new RangeError(`maxShiftPx must be ≥ 0, got ${maxShiftPx}`);
  const { data, width, height } = raster;
  const half = Math.ceil(3 * sigmaPx + maxShiftPx);
  return places.map((p) => {
    const x0 = Math.max(0, Math.round(p.x) - half);
    const x1 = Math.min(width - 1, Math.round(p.x) + half);
    const y0 = Math.max(0, Math.round(p.y) - half);
    const y1 = Math.min(height - 1, Math.round(p.y) + half);
    // the place must be inside the frame and the window big enough for a spot
    if (p.x < 0 || p.y < 0 || p.x > width - 1 || p.y > height - 1 || x1 - x0 < 4 || y1 - y0 < 4) return null;
    const w = x1 - x0 + 1;
    const h = y1 - y0 + 1;
    const values = new Float64Array(w * h);
    const border: number[] = [];
    let best = -Infinity;
    let bx = p.x;
    let by = p.y;
    for (let y = y0; y <= y1; y++) {
      for (let x = x0; x <= x1; x++) {
        const v = data[y * width + x];
        values[(y - y0) * w + (x - x0)] = v;
        if (x === x0 || x === x1 || y === y0 || y === y1) border.push(v);
        if (Math.abs(x - p.x) <= maxShiftPx && Math.abs(y - p.y) <= maxShiftPx && v > best) {
          best = v;
          bx = x;
          by = y;
        }
      }
    }
    border.sort((a, b) => a - b);
    const background = border[Math.floor(border.length / 2)];
    // robust SD of the border: 1.4826 × MAD (normal consistency constant)
    const mad = border.map((v) => Math.abs(v - background)).sort((a, b) => a - b)[Math.floor(border.length / 2)];
    const noise = Math.max(1e-9, 1.4826 * mad);
    if (!(best > background)) return null;
    const fit = fitSpotGaussian({ values, x0, y0, width: w, height: h }, { x: bx, y: by, amplitude: best - background, background, sigmaPx }, { maxShiftPx: 1.5, maxIterations: 30 });
    if (!fit || !Number.isFinite(fit.x) || Math.abs(fit.x - p.x) > maxShiftPx + 1 || Math.abs(fit.y - p.y) > maxShiftPx + 1) return null;
    return {
      x: fit.x, y: fit.y, sigmaPx: fit.sigmaPx,
      integratedCounts: 2 * Math.PI * fit.sigmaPx * fit.sigmaPx * fit.amplitude,
      peakSnr: fit.amplitude / noise,
      backgroundCounts: fit.background,
    };
  });
}
