import KDBush from 'kdbush';
import type { Point, Raster } from '../types';
import { AnalysisError } from '../errors';
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
 * Positivity threshold for one channel when no control sample exists: net aperture counts at empty places of the
 * same frame, mean + k·SD. Candidate centres lie on a square lattice (spacing = annulus diameter, so apertures do not
 * overlap), are kept when they are far from every vesicle and spot and their annulus is inside the frame, and are
 * thinned evenly to `maxApertures`. Deterministic: no random placement.
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
  const { sigmaPx, radiusPx = 2 * sigmaPx, exclusionRadiusPx = 6 * sigmaPx, maxApertures = 400, k = 3 } = options;
  const inner = Math.max(radiusPx + 1, 3 * sigmaPx);
  const outer = inner + Math.max(3, 2 * sigmaPx);
  const spacing = 2 * outer;
  const index = new KDBush(Math.max(1, avoidPx.length));
  for (const p of avoidPx) index.add(p.x, p.y);
  if (avoidPx.length === 0) index.add(-1e9, -1e9);
  index.finish();

  // candidates
  const candidates: Point[] = [];
  for (let y = outer + 1; y < raster.height - outer - 1; y += spacing) {
    for (let x = outer + 1; x < raster.width - outer - 1; x += spacing) {
      if (index.within(x, y, exclusionRadiusPx).length === 0) candidates.push({ x, y });
    }
  }
  if (candidates.length < 10) {
    throw new AnalysisError(
      'too_few_background_apertures',
      `only ${candidates.length} empty places for background apertures; need at least 10 (frame too crowded or small)`,
      { nbCandidates: candidates.length },
    );
  }
  const step = Math.max(1, candidates.length / maxApertures);
  const positions: Point[] = [];
  for (let i = 0; i < candidates.length && positions.length < maxApertures; i += step) positions.push(candidates[Math.floor(i)]);

  // measure
  const values = positions.map((p) => aperturePhotometry(raster, p, { sigmaPx, radiusPx }).netCounts);
  return { ...thresholdFromControls(values, k), positions };
}
