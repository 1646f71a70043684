import KDBush from 'kdbush';
import type { Point, Raster } from '../types';
import { AnalysisError } from '../errors';

/** Options of {@link backgroundPositions}. */
export interface BackgroundPositionsOptions {
  /** PSF standard deviation (px). Required. */
  sigmaPx: number;
  /**
   * Aperture radius (px), as used for the vesicles; sets the lattice spacing.
   * @default 2·sigmaPx
   */
  radiusPx?: number;
  /**
   * Positions keep at least this distance from every vesicle and spot (px).
   * @default 6·sigmaPx
   */
  exclusionRadiusPx?: number;
  /**
   * Upper limit on the number of positions (count).
   * @default 400
   */
  maxPositions?: number;
  /**
   * Lattice spacing (px); smaller than the default only where each place is fitted alone in a window narrower than
   * the aperture annulus (e.g. joint-amplitude fits, window ±3·sigmaPx).
   * @default twice the outer radius of the aperture annulus (≥ 10·sigmaPx)
   */
  spacingPx?: number;
  /**
   * Fewest places accepted before the error below.
   * @default 10
   */
  minPositions?: number;
}

/**
 * Empty places of a fluorescence frame, for measuring what a vesicle-free place reads. Centres lie on a square
 * lattice whose spacing is the diameter of an aperture's background annulus (so neither apertures nor PSF fits of
 * neighbouring places overlap: spacing ≥ 10·sigmaPx), are kept when far from every vesicle and spot and when the
 * annulus lies inside the frame, and are thinned evenly to `maxPositions`. Deterministic: no random placement.
 *
 * @param raster - fluorescence frame (only its size is used); not modified
 * @param avoidPx - vesicle and spot positions to stay away from (px); not modified
 * @param options - see {@link BackgroundPositionsOptions}
 * @returns the lattice centres (px)
 * @throws AnalysisError `too_few_background_apertures` when fewer than minPositions places are free
 */
export function backgroundPositions(raster: Raster, avoidPx: readonly Point[], options: BackgroundPositionsOptions): Point[] {
  const { sigmaPx, radiusPx = 2 * sigmaPx, exclusionRadiusPx = 6 * sigmaPx, maxPositions = 400, minPositions = 10 } = options;
  const inner = Math.max(radiusPx + 1, 3 * sigmaPx);
  const annulusOuter = inner + Math.max(3, 2 * sigmaPx);
  const spacing = options.spacingPx ?? 2 * annulusOuter;
  const outer = options.spacingPx === undefined ? annulusOuter : Math.max(1, spacing / 2);
  const index = new KDBush(Math.max(1, avoidPx.length));
  for (const p of avoidPx) index.add(p.x, p.y);
  if (avoidPx.length === 0) index.add(-1e9, -1e9);
  index.finish();

  const candidates: Point[] = [];
  for (let y = outer + 1; y < raster.height - outer - 1; y += spacing) {
    for (let x = outer + 1; x < raster.width - outer - 1; x += spacing) {
      if (index.within(x, y, exclusionRadiusPx).length === 0) candidates.push({ x, y });
    }
  }
  if (candidates.length < minPositions) {
    throw new AnalysisError(
      'too_few_background_apertures',
      `only ${candidates.length} empty places for background apertures; need at least ${minPositions} (frame too crowded or small)`,
      { nbCandidates: candidates.length },
    );
  }
  const step = Math.max(1, candidates.length / maxPositions);
  const positions: Point[] = [];
  for (let i = 0; i < candidates.length && positions.length < maxPositions; i += step) positions.push(candidates[Math.floor(i)]);
  return positions;
}
