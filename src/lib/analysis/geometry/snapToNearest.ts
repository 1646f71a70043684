import type { Point } from '../types';
import { buildPointIndex } from './buildPointIndex';
import { nearestInIndex } from './nearestInIndex';

/** Result of {@link snapToNearest}. */
export interface SnapToNearestResult {
  /** Index of the chosen candidate. */
  readonly index: number;
  /** The candidate itself (pixels). */
  readonly point: Point;
  /** Distance from the clicked point (pixels). */
  readonly distancePx: number;
}

/**
 * Snaps a clicked point to the nearest detected candidate (e.g. a bead centre) within a radius.
 *
 * @param point - clicked point (pixels of the image)
 * @param candidates - detected points in the same image (pixels)
 * @param maxDistancePx - largest snap distance (pixels)
 * @returns the nearest candidate, or null when none is within `maxDistancePx`
 */
export function snapToNearest(
  point: Point,
  candidates: readonly Point[],
  maxDistancePx: number,
): SnapToNearestResult | null {
  if (candidates.length === 0) return null;
  const hit = nearestInIndex(buildPointIndex(candidates), candidates, point, maxDistancePx);
  return hit === null ? null : { index: hit.index, point: { ...candidates[hit.index] }, distancePx: hit.distancePx };
}
