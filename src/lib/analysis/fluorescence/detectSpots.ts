import { levenbergMarquardt } from 'ml-levenberg-marquardt';
import type { Raster } from '../types';
import type { FluorescenceSpot } from './types';
import { laplacianOfGaussian } from './laplacianOfGaussian';
import { robustNoiseSigma } from './robustNoiseSigma';

/** Options of {@link detectSpots}. */
export interface DetectSpotsOptions {
  /** PSF standard deviation (px), e.g. from {@link psfSigmaPx}. Required. */
  sigmaPx: number;
  /**
   * Detection threshold in robust SDs of the LoG-filtered image. At 5 SD a Gaussian tail gives
   * ≈ 3·10⁻⁷ per pixel, about one false maximum in a 2048² frame.
   * @default 5
   */
  thresholdK?: number;
  /**
   * Half-size of the local-maximum neighbourhood: 1 means 3×3 (px).
   * @default 1
   */
  localMaxRadiusPx?: number;
  /**
   * Half-size of the square fitting window (px).
   * @default max(2, ceil(2.5·sigmaPx))
   */
  fitRadiusPx?: number;
  /**
   * 'gaussian' fits a 2-D Gaussian + constant by Levenberg–Marquardt; 'centroid' uses the weighted centroid only.
   * @default 'gaussian'
   */
  refine?: 'gaussian' | 'centroid';
  /**
   * A fit whose centre moves further than this from the detected maximum is rejected (px).
   * @default 1
   */
  maxShiftPx?: number;
  /**
   * Levenberg–Marquardt iterations per spot (the solver has no relative stopping rule, so all are run).
   * @default 10
   */
  maxIterations?: number;
  /**
   * Smooth background model that was subtracted from `raster` (counts per pixel), from {@link correctBackground};
   * added to each spot's `backgroundCounts`.
   * @default none (zero)
   */
  background?: Raster;
  /**
   * Camera gain (counts per photon): the spot's own shot variance is g·N (counts²).
   * @default 1
   */
  gainCountsPerPhoton?: number;
}

/** Result of {@link detectSpots}. */
export interface DetectSpotsResult {
  readonly spots: FluorescenceSpot[];
  /** Threshold applied to the scale-normalised LoG response (counts). */
  readonly thresholdLog: number;
  /** Robust SD of the LoG response (counts). */
  readonly logSigma: number;
  /** Robust per-pixel noise of the input (counts). */
  readonly pixelSigmaCounts: number;
  /** Local maxima above threshold. */
  readonly nbCandidates: number;
  /** Spots refined by the Gaussian fit, and by the centroid fallback. */
  readonly nbFitted: number;
  readonly nbCentroid: number;
}

/**
 * Finds diffraction-limited spots in a background-corrected fluorescence frame.
 *
 * Phases: scale-normalised Laplacian of Gaussian at the PSF sigma; local maxima above median + k·robust SD of the
 * response; sub-pixel refinement by a 2-D Gaussian + constant fitted with Levenberg–Marquardt on a small window,
 * falling back to the background-subtracted weighted centroid when the fit fails, wanders or gives an implausible
 * width; integrated counts and SNR per spot.
 *
 * SNR = N / √(g·N + 4πσ²·s²), with N the integrated counts, g the gain and s the robust pixel noise of the
 * frame, which already holds the background's shot noise and the read noise; 4πσ² is the noise-equivalent area of
 * a Gaussian (common practice).
 *
 * @param raster - background-corrected frame (counts above background); not modified
 * @param options - see {@link DetectSpotsOptions}
 * @returns spots and detection diagnostics
 * @throws RangeError for a non-positive sigmaPx or a background raster of another size
 * @see Lindeberg T. Feature detection with automatic scale selection. IJCV 30(2):79–116, 1998.
 */
export function detectSpots(raster: Raster, options: DetectSpotsOptions): DetectSpotsResult {
  const {
    sigmaPx,
    thresholdK = 5,
    localMaxRadiusPx = 1,
    fitRadiusPx = Math.max(2, Math.ceil(2.5 * sigmaPx)),
    refine = 'gaussian',
    maxShiftPx = 1,
    maxIterations = 10,
    background,
    gainCountsPerPhoton = 1,
  } = options;
  if (!Number.isFinite(sigmaPx) || sigmaPx <= 0) {
    throw new RangeError(`sigmaPx must be a finite positive number, got ${sigmaPx}`);
  }
  const { width, height, data } = raster;
  if (background && (background.width !== width || background.height !== height)) {
    throw new RangeError(
      `background must be ${width}×${height} like the raster, got ${background.width}×${background.height}`,
    );
  }

  // filter and threshold
  const log = laplacianOfGaussian(raster, sigmaPx).data;
  const logStats = robustNoiseSigma(log);
  const thresholdLog = logStats.median + thresholdK * logStats.sigma;
  const pixelSigmaCounts = robustNoiseSigma(data).sigma;

  // local maxima: ties are broken towards the later pixel so a plateau yields one maximum
  const candidates: number[] = [];
  const r = localMaxRadiusPx;
  for (let y = r; y < height - r; y++) {
    for (let x = r; x < width - r; x++) {
      const i = y * width + x;
      const v = log[i];
      if (v <= thresholdLog) continue;
      let isMax = true;
      for (let dy = -r; dy <= r && isMax; dy++) {
        const row = i + dy * width;
        for (let dx = -r; dx <= r; dx++) {
          const j = row + dx;
          if (j === i) continue;
          const w = log[j];
          if (w > v || (w === v && j > i)) {
            isMax = false;
            break;
          }
        }
      }
      if (isMax) candidates.push(i);
    }
  }

  // refine
  const spots: FluorescenceSpot[] = [];
  let nbFitted = 0;
  const noiseArea = 4 * Math.PI * sigmaPx * sigmaPx;
  for (const index of candidates) {
    const cx = index % width;
    const cy = (index - cx) / width;
    const x0 = Math.max(0, cx - fitRadiusPx);
    const x1 = Math.min(width - 1, cx + fitRadiusPx);
    const y0 = Math.max(0, cy - fitRadiusPx);
    const y1 = Math.min(height - 1, cy + fitRadiusPx);
    const n = (x1 - x0 + 1) * (y1 - y0 + 1);
    const xs = new Float64Array(n);
    const ys = new Float64Array(n);
    const vs = new Float64Array(n);
    const border: number[] = [];
    let k = 0;
    for (let y = y0; y <= y1; y++) {
      for (let x = x0; x <= x1; x++) {
        xs[k] = x;
        ys[k] = y;
        vs[k] = data[y * width + x];
        if (x === x0 || x === x1 || y === y0 || y === y1) border.push(vs[k]);
        k++;
      }
    }
    border.sort((a, b) => a - b);
    const localBg = border[border.length >> 1];

    let spot: FluorescenceSpot | undefined;
    if (refine === 'gaussian') {
      spot = fitGaussian(xs, ys, vs, cx, cy, localBg, data[index] - localBg, sigmaPx, maxShiftPx, maxIterations);
    }
    if (spot) nbFitted++;
    else spot = centroid(xs, ys, vs, localBg, sigmaPx);

    // SNR
    const bx = Math.min(width - 1, Math.max(0, Math.round(spot.x)));
    const by = Math.min(height - 1, Math.max(0, Math.round(spot.y)));
    const modelBg = background ? background.data[by * width + bx] : 0;
    const backgroundCounts = spot.backgroundCounts + modelBg;
    const signal = spot.integratedCounts;
    const variance = gainCountsPerPhoton * Math.max(signal, 0) + noiseArea * pixelSigmaCounts * pixelSigmaCounts;
    spots.push({ ...spot, backgroundCounts, snr: variance > 0 ? signal / Math.sqrt(variance) : 0 });
  }

  return {
    spots,
    thresholdLog,
    logSigma: logStats.sigma,
    pixelSigmaCounts,
    nbCandidates: candidates.length,
    nbFitted,
    nbCentroid: candidates.length - nbFitted,
  };
}

function fitGaussian(
  xs: Float64Array,
  ys: Float64Array,
  vs: Float64Array,
  cx: number,
  cy: number,
  bg0: number,
  amp0: number,
  sigmaPx: number,
  maxShiftPx: number,
  maxIterations: number,
): FluorescenceSpot | undefined {
  // the solver takes a 1-D abscissa, so the model is indexed by pixel number inside the window
  const idx = new Float64Array(xs.length);
  for (let i = 0; i < idx.length; i++) idx[i] = i;
  const model = ([a, mx, my, s, b]: number[]) => {
    const inv = 1 / (2 * s * s);
    return (i: number) => {
      const dx = xs[i] - mx;
      const dy = ys[i] - my;
      return a * Math.exp(-(dx * dx + dy * dy) * inv) + b;
    };
  };
  const jacobian = ([a, mx, my, s]: number[]) => {
    const s2 = s * s;
    return (i: number) => {
      const dx = xs[i] - mx;
      const dy = ys[i] - my;
      const r2 = dx * dx + dy * dy;
      const e = Math.exp(-r2 / (2 * s2));
      return [e, (a * e * dx) / s2, (a * e * dy) / s2, (a * e * r2) / (s2 * s), 1];
    };
  };
  let params: number[];
  try {
    params = levenbergMarquardt({ x: idx, y: vs }, model, {
      initialValues: [Math.max(amp0, 1e-3), cx, cy, sigmaPx, bg0],
      jacobianFunction: jacobian,
      minValues: [0, cx - maxShiftPx - 1, cy - maxShiftPx - 1, 0.3 * sigmaPx, -Infinity],
      maxValues: [Infinity, cx + maxShiftPx + 1, cy + maxShiftPx + 1, 3 * sigmaPx, Infinity],
      maxIterations,
      errorTolerance: 0,
    }).parameterValues;
  } catch {
    return undefined;
  }
  const [a, mx, my, s, b] = params;
  const plausible =
    params.every(Number.isFinite) &&
    a > 0 &&
    Math.hypot(mx - cx, my - cy) <= maxShiftPx &&
    s >= 0.5 * sigmaPx &&
    s <= 2 * sigmaPx;
  if (!plausible) return undefined;
  return {
    x: mx,
    y: my,
    amplitude: a,
    sigmaPx: s,
    integratedCounts: 2 * Math.PI * a * s * s,
    backgroundCounts: b,
    snr: 0,
    fitted: true,
  };
}

function centroid(
  xs: Float64Array,
  ys: Float64Array,
  vs: Float64Array,
  localBg: number,
  sigmaPx: number,
): FluorescenceSpot {
  let sw = 0;
  let sx = 0;
  let sy = 0;
  let total = 0;
  for (let i = 0; i < vs.length; i++) {
    const v = vs[i] - localBg;
    total += v;
    if (v > 0) {
      sw += v;
      sx += v * xs[i];
      sy += v * ys[i];
    }
  }
  const x = sw > 0 ? sx / sw : xs[xs.length >> 1];
  const y = sw > 0 ? sy / sw : ys[ys.length >> 1];
  return {
    x,
    y,
    amplitude: total / (2 * Math.PI * sigmaPx * sigmaPx),
    sigmaPx,
    integratedCounts: total,
    backgroundCounts: localBg,
    snr: 0,
    fitted: false,
  };
}
