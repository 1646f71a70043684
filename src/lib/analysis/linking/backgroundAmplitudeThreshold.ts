import type { Point, Raster } from '../types';
import { backgroundPositions } from './backgroundPositions';
import { estimateMarkerAmplitudes } from './estimateMarkerAmplitudes';
import { thresholdFromControls, type ThresholdFromControlsResult } from './thresholdFromControls';

/** Options of {@link backgroundAmplitudeThreshold}. */
export interface BackgroundAmplitudeThresholdOptions {
  /** PSF standard deviation (px), the same as for the vesicles' joint fit. Required. */
  sigmaPx: number;
  /**
   * Places keep at least this distance from every vesicle and spot (px).
   * @default 6·sigmaPx
   */
  exclusionRadiusPx?: number;
  /**
   * Upper limit on the number of places (count).
   * @default 400
   */
  maxPositions?: number;
  /**
   * Threshold = mean + k·SD of the empty places' amplitudes.
   * @default 3
   */
  k?: number;
}

/** Result of {@link backgroundAmplitudeThreshold}. */
export interface BackgroundAmplitudeThresholdResult extends ThresholdFromControlsResult {
  /** Centres of the empty places used (px). */
  readonly positions: Point[];
}

/**
 * Positivity threshold for one channel when no control sample exists, in the unit of the joint amplitude (total
 * counts of one PSF, see {@link estimateMarkerAmplitudes}): a PSF column plus background is fitted at each empty place
 * of the same frame ({@link backgroundPositions}, ≥ 10·sigmaPx apart, so each is fitted alone) and the threshold is
 * mean + k·SD of those amplitudes. The unconstrained amplitudes are used: NNLS would clip half of them to 0 and
 * shrink the SD (for pure noise mean + 3 SD would fall from 3 to ≈ 2.15 SE). For a vesicle fitted alone the NNLS
 * amplitude exceeds a positive threshold exactly when the unconstrained one does, so the comparison is consistent.
 *
 * @param raster - fluorescence frame (counts; the offset may remain, the background column absorbs it); not modified
 * @param avoidPx - vesicle and spot positions to stay away from (px); not modified
 * @param options - see {@link BackgroundAmplitudeThresholdOptions}
 * @returns the threshold (counts of PSF amplitude), its ingredients and the places used
 * @throws AnalysisError `too_few_background_apertures` when fewer than 10 places are free
 */
export function backgroundAmplitudeThreshold(
  raster: Raster,
  avoidPx: readonly Point[],
  options: BackgroundAmplitudeThresholdOptions,
): BackgroundAmplitudeThresholdResult {
  const { sigmaPx, exclusionRadiusPx, maxPositions = 400, k = 3 } = options;
  const positions = backgroundPositions(raster, avoidPx, { sigmaPx, exclusionRadiusPx, maxPositions });
  const values = estimateMarkerAmplitudes(raster, positions, { sigmaPx }).amplitudes.map((a) => a.unconstrainedAmplitudeCounts);
  return { ...thresholdFromControls(values, k), positions };
}
