import type { Raster } from '../types';
import { robustNoiseSigma } from '../fluorescence/robustNoiseSigma';
import type { CameraModel } from './types';

/** What is known of the camera; the missing values are estimated by {@link estimateCameraModel}. */
export interface EstimateCameraModelOptions {
  /** Bias (counts), e.g. from the data sheet. @default estimated (see below) */
  offsetCounts?: number;
  /** Gain (counts/photon). @default estimated from the offset when that is known, else 1 */
  gainCountsPerPhoton?: number;
  /** Read noise RMS (counts). @default 0 */
  readNoiseCounts?: number;
}

/** Result of {@link estimateCameraModel}. */
export interface EstimateCameraModelResult {
  readonly camera: CameraModel;
  /** 'given' when all three values were given, else 'estimated'. */
  readonly source: 'given' | 'estimated';
  /** Median pixel value of the frame (counts) and the robust background pixel SD (counts) the estimate used. */
  readonly backgroundCounts: number;
  readonly backgroundSdCounts: number;
  /** A sentence on what was assumed, for people; empty when everything was given. */
  readonly note: string;
}

/**
 * The camera model of a frame, with missing values estimated from the frame itself. The background pixel variance v
 * is measured robustly from differences of horizontally neighbouring pixels (1.4826·MAD/√2: a smooth slope and
 * sparse spots barely move it) and the background level μ is the frame's median. Under the model
 * v = g·(μ − offset) + r²:
 * - offset known, gain not: g = (v − r²)/(μ − offset) (one point of the photon-transfer curve);
 * - offset unknown: one frame cannot separate gain from offset, so g is taken as given or 1 and the offset is set to
 *   μ − (v − r²)/g, an effective offset that makes the model's background variance equal the measured one. z at
 *   unlabelled places depends only on that background variance; the assumed gain only scales the extra shot noise of
 *   bright spots. The robust null calibration absorbs what is left of a wrong model.
 *
 * @param raster - fluorescence frame (raw counts); not modified
 * @param options - see {@link EstimateCameraModelOptions}
 * @returns the model, how it was obtained and a note
 * @throws RangeError for a non-positive gain or a negative read noise
 * @see Janesick JR. Photon Transfer. SPIE Press, 2007 (variance = gain·signal + read², from memory; docs/references.md §4).
 */
export function estimateCameraModel(raster: Raster, options: EstimateCameraModelOptions = {}): EstimateCameraModelResult {
  const { offsetCounts, gainCountsPerPhoton, readNoiseCounts = 0 } = options;
  if (gainCountsPerPhoton !== undefined && !(gainCountsPerPhoton > 0)) throw new RangeError(`gainCountsPerPhoton must be positive, got ${gainCountsPerPhoton}`);
  if (!(readNoiseCounts >= 0)) throw new RangeError(`readNoiseCounts must be ≥ 0, got ${readNoiseCounts}`);
  const { data, width, height } = raster;
  const background = robustNoiseSigma(data).median;
  const diffs = new Float32Array((width - 1) * height);
  let j = 0;
  for (let y = 0; y < height; y++) for (let x = 0; x < width - 1; x++) diffs[j++] = data[y * width + x + 1] - data[y * width + x];
  const sd = robustNoiseSigma(diffs).sigma / Math.SQRT2;
  const variance = sd * sd;
  const r2 = readNoiseCounts * readNoiseCounts;
  const source = offsetCounts !== undefined && gainCountsPerPhoton !== undefined && options.readNoiseCounts !== undefined ? 'given' : 'estimated';
  if (offsetCounts !== undefined && gainCountsPerPhoton !== undefined) {
    return { camera: { offsetCounts, gainCountsPerPhoton, readNoiseCounts }, source, backgroundCounts: background, backgroundSdCounts: sd,
      note: source === 'given' ? '' : `read noise taken as ${readNoiseCounts} counts` };
  }
  if (offsetCounts !== undefined) {
    const g = (variance - r2) / (background - offsetCounts);
    if (Number.isFinite(g) && g > 0) {
      return { camera: { offsetCounts, gainCountsPerPhoton: g, readNoiseCounts }, source, backgroundCounts: background, backgroundSdCounts: sd,
        note: `gain ${g.toPrecision(3)} counts/photon estimated from the background's mean and variance (offset ${offsetCounts} counts given)` };
    }
  }
  const g = gainCountsPerPhoton ?? 1;
  return {
    camera: { offsetCounts: background - Math.max(0, variance - r2) / g, gainCountsPerPhoton: g, readNoiseCounts },
    source,
    backgroundCounts: background,
    backgroundSdCounts: sd,
    note: `${gainCountsPerPhoton === undefined ? 'gain 1 count/photon assumed' : `gain ${g} counts/photon given`}; ` +
      'effective offset set so the modelled background variance equals the measured one (one frame cannot separate gain and offset)',
  };
}
