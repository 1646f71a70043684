import { AnalysisError } from '../errors';
import type { Raster } from '../types';
import { robustSigma } from './robustSigma';
import type { RobustThresholdOptions, ThresholdResult } from './types';
import { validateRaster } from './validateRaster';

/** Samples used for the median/MAD (regular subsample, see robustSigma). */
const ROBUST_MAX_SAMPLES = 1 << 17;

/**
 * Threshold = median + k·robust sigma of the background of a levelled map. Particles are removed
 * by sigma clipping (pixels above median + k·sigma are dropped and the statistics recomputed),
 * so a crowded field does not inflate the noise estimate.
 *
 * @param levelled - levelled heights (nm)
 * @param options - see {@link RobustThresholdOptions}
 * @returns threshold (nm) with the background median and sigma used
 * @throws AnalysisError `flat_background` when the background sigma is 0 (no noise to scale k by)
 * @see Hampel FR 1974, J Am Stat Assoc 69:383–393 (MAD); k = 3 as in the IUPAC detection limit (docs/references.md §9)
 */
export function robustThreshold(levelled: Raster, options: RobustThresholdOptions = {}): ThresholdResult {
  const { k = 3, clipIterations = 3, backgroundMask } = options;
  validateRaster(levelled, 'levelled');
  if (!(k > 0)) throw new RangeError(`k must be > 0, got ${k}`);
  const { data } = levelled;
  if (backgroundMask && backgroundMask.length !== data.length) throw new RangeError(`backgroundMask length ${backgroundMask.length} ≠ raster size ${data.length}`);
  const scratch = new Float32Array(data.length);
  let stats;
  if (backgroundMask) {
    stats = robustSigma(data, backgroundMask, scratch, ROBUST_MAX_SAMPLES);
  } else {
    const keep = new Uint8Array(data.length).fill(1);
    stats = robustSigma(data, keep, scratch, ROBUST_MAX_SAMPLES);
    for (let it = 0; it < clipIterations; it++) {
      const cut = stats.median + k * stats.robustSigma;
      for (let i = 0; i < data.length; i++) keep[i] = data[i] > cut ? 0 : 1;
      stats = robustSigma(data, keep, scratch, ROBUST_MAX_SAMPLES);
    }
  }
  if (!(stats.robustSigma > 0)) {
    throw new AnalysisError('flat_background', 'The background has zero spread (robust sigma 0 nm), so a k·sigma threshold is undefined; use a manual threshold.', { medianNm: stats.median });
  }
  return {
    method: 'robust',
    thresholdNm: stats.median + k * stats.robustSigma,
    diagnostics: { backgroundMedianNm: stats.median, backgroundSigmaNm: stats.robustSigma, k },
  };
}
