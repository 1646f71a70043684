import type { Raster } from '../types';
import { detectVesicles } from './detectVesicles';
import { levelHeightMap } from './levelHeightMap';
import { measureVesicle } from './measureVesicle';
import { selectThreshold } from './selectThreshold';
import type { AnalyzeHeightMapOptions, AnalyzeHeightMapResult } from './types';

/**
 * Whole height-map analysis in one call: level, choose the threshold, detect, measure every vesicle
 * and fiducial candidate. Stages are exported separately so callers can time them from outside.
 *
 * @param raster - raw heights (nm)
 * @param pixelSizeNm - pixel size (nm/px), > 0
 * @param options - per-stage options; see {@link AnalyzeHeightMapOptions}
 * @returns levelling report, threshold, label map, measured vesicles and fiducial candidates
 * @throws AnalysisError codes of {@link levelHeightMap}, {@link selectThreshold} and {@link measureVesicle}
 * @throws RangeError for a malformed raster or a non-positive pixel size
 */
export function analyzeHeightMap(raster: Raster, pixelSizeNm: number, options: AnalyzeHeightMapOptions = {}): AnalyzeHeightMapResult {
  const { level = {}, threshold: thresholdOptions = { method: 'robust', k: 3 }, detect = {}, measure = {} } = options;
  if (!(pixelSizeNm > 0) || !Number.isFinite(pixelSizeNm)) throw new RangeError(`pixelSizeNm must be a positive finite number, got ${pixelSizeNm}`);
  const levelling = levelHeightMap(raster, level);
  // the robust threshold reuses the background found by levelling unless the caller gave one
  const threshold = selectThreshold(
    levelling.levelled,
    thresholdOptions.method === 'robust' ? { backgroundMask: levelling.backgroundMask, ...thresholdOptions } : thresholdOptions,
  );
  const detection = detectVesicles(levelling.levelled, { ...detect, thresholdNm: threshold.thresholdNm });
  const measureOptions = { ...measure, thresholdNm: Math.max(0, threshold.thresholdNm) };
  const measureAll = (regions: typeof detection.vesicles) =>
    regions.map((r) => measureVesicle(levelling.levelled, detection.labels, r, pixelSizeNm, measureOptions));
  return {
    pixelSizeNm,
    levelling,
    threshold,
    detection,
    labels: detection.labels,
    vesicles: measureAll(detection.vesicles),
    fiducialCandidates: measureAll(detection.fiducialCandidates),
  };
}
