import { AnalysisError } from '../errors';
import type { Raster } from '../types';
import { otsuHistogramThreshold } from './otsuHistogramThreshold';
import type { OtsuThresholdOptions, ThresholdResult } from './types';
import { validateRaster } from './validateRaster';

/**
 * Otsu's threshold of float heights: a histogram of `nbBins` equal bins between the minimum and the
 * maximum, Otsu's split on it (bin centres as values), and the threshold at the upper edge of the
 * last background bin. Beware: tall beads in the field pull the split towards them. Written here because
 * image-js computes its thresholds on the integer histogram of 8/16-bit images, and heights are floats.
 *
 * @param raster - levelled heights (nm)
 * @param options - see {@link OtsuThresholdOptions}
 * @returns threshold (nm); foreground = heights above it
 * @throws AnalysisError `single_class_histogram` for a constant map
 * @see Otsu N 1979, IEEE Trans Syst Man Cybern 9(1):62–66
 */
export function otsuThreshold(raster: Raster, options: OtsuThresholdOptions = {}): ThresholdResult {
  const { nbBins = 256 } = options;
  validateRaster(raster);
  if (!Number.isInteger(nbBins) || nbBins < 2) throw new RangeError(`nbBins must be an integer ≥ 2, got ${nbBins}`);
  const { data } = raster;
  let min = Infinity;
  let max = -Infinity;
  for (let i = 0; i < data.length; i++) {
    const v = data[i];
    if (v < min) min = v;
    if (v > max) max = v;
  }
  if (!(max > min)) {
    throw new AnalysisError('single_class_histogram', `All heights equal ${min} nm; Otsu needs contrast.`, { heightNm: min });
  }
  const binWidth = (max - min) / nbBins;
  const counts = new Float64Array(nbBins);
  for (let i = 0; i < data.length; i++) {
    const b = Math.min(nbBins - 1, Math.floor((data[i] - min) / binWidth));
    counts[b] += 1;
  }
  const centres = new Float64Array(nbBins);
  for (let b = 0; b < nbBins; b++) centres[b] = min + (b + 0.5) * binWidth;
  const otsu = otsuHistogramThreshold(counts, centres);
  return {
    method: 'otsu',
    thresholdNm: min + (otsu.thresholdIndex + 1) * binWidth,
    diagnostics: { betweenClassVarianceNm2: otsu.betweenClassVariance, nbBins },
  };
}
