import type { Point, Raster } from '../types';
import { backgroundPositions } from './backgroundPositions';
import { aperturePhotometry } from '../fluorescence/aperturePhotometry';
import { thresholdFromControls, type ThresholdFromControlsResult } from './thresholdFromControls';

/** Options of {@link backgroundApertureThreshold}. */
export interface BackgroundApertureThresholdOptions {
  /** PSF standard deviation (px); the apertures use the same defaults as {@link aperturePhotometry}. Required. */
  sigmaPx: number;
  /**
   * Aperture radius (px), as used for the vesicles.
   * @default 2·sigmaPx
   */
  radiusPx?: number;
  /**
   * Background apertures keep at least this distance from every vesicle and spot (px).
   * @default 6·sigmaPx
   */
  exclusionRadiusPx?: number;
  /**
   * Upper limit on the number of apertures (count).
   * @default 400
   */
  maxApertures?: number;
  /**
   * Threshold = mean + k·SD of the background apertures.
   * @default 3
   */
  k?: number;
}

/** Result of {@link backgroundApertureThreshold}. */
export interface BackgroundApertureThresholdResult extends ThresholdFromControlsResult {
  /** Centres of the apertures used (px). */
  readonly positions: Point[];
}

/**
 * Aperture-count threshold for one channel: net aperture counts at empty places of the same frame
 * ({@link backgroundPositions}), mean + k·SD. The pipeline calls markers on the joint amplitude and so uses
 * {@link backgroundAmplitudeThreshold}; this one stays for comparing with aperture photometry.
 *
 * @param raster - fluorescence frame (counts); not modified
 * @param avoidPx - vesicle and spot positions to stay away from (px); not modified
 * @param options - see {@link BackgroundApertureThresholdOptions}
 * @returns the threshold (net aperture counts), its ingredients and the aperture centres
 * @throws AnalysisError `too_few_background_apertures` when fewer than 10 places are free
 */
export function backgroundApertureThreshold(
  raster: Raster,
  avoidPx: readonly Point[],
  options: BackgroundApertureThresholdOptions,
): BackgroundApertureThresholdResult {
  const { sigmaPx, radiusPx = 2 * sigmaPx, exclusionRadiusPx, maxApertures = 400, k = 3 } = options;
  const positions = backgroundPositions(raster, avoidPx, { sigmaPx, radiusPx, exclusionRadiusPx, maxPositions: maxApertures });
  const values = positions.map((p) => aperturePhotometry(raster, p, { sigmaPx, radiusPx }).netCounts);
  return { ...thresholdFromControls(values, k), positions };
}
