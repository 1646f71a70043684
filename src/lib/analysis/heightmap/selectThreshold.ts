import type { Raster } from '../types';
import { otsuThreshold } from './otsuThreshold';
import { robustThreshold } from './robustThreshold';
import type { SelectThresholdOptions, ThresholdResult } from './types';

/**
 * Pick the height threshold of a levelled map by the chosen method: robust (median + k·1.4826·MAD),
 * Otsu, or a manual value.
 *
 * @param levelled - levelled heights (nm)
 * @param options - method and its parameters; @default { method: 'robust' } (k = 3)
 * @returns threshold (nm) with diagnostics of the method
 * @throws AnalysisError codes of {@link robustThreshold} and {@link otsuThreshold}
 * @throws RangeError for a non-finite manual threshold
 */
export function selectThreshold(levelled: Raster, options: SelectThresholdOptions = { method: 'robust' }): ThresholdResult {
  switch (options.method) {
    case 'robust':
      return robustThreshold(levelled, options);
    case 'otsu':
      return otsuThreshold(levelled, options);
    case 'manual':
      if (!Number.isFinite(options.thresholdNm)) throw new RangeError(`manual thresholdNm must be finite, got ${options.thresholdNm}`);
      return { method: 'manual', thresholdNm: options.thresholdNm, diagnostics: {} };
    default:
      throw new RangeError(`unknown threshold method ${(options as { method: string }).method}`);
  }
}
