import type KDBush from 'kdbush';
import type { Point } from '../types';

/** The nearest indexed point to a query, or null. */
export interface NearestInIndexResult {
  readonly index: number;
  readonly distancePx: number;
}

/**
 * Nearest indexed point within a radius.
 *
 * @param tree - index built by buildPointIndex over `points`
 * @param points - the indexed points (pixels)
 * @param query - query point (same pixels)
 * @param maxDistancePx - search radius (pixels)
 * @returns the nearest point's index and distance (px), or null if none is within the radius
 */
export function nearestInIndex(
  tree: KDBush,
  points: readonly Point[],
  query: Point,
  maxDistancePx: number,
): NearestInIndexResult | null {
  let best: NearestInIndexResult | null = null;
  for (const id of tree.within(query.x, query.y, maxDistancePx)) {
    if (id >= points.length) continue;
    const distancePx = Math.hypot(points[id].x - query.x, points[id].y - query.y);
    if (best === null || distancePx < best.distancePx) best = { index: id, distancePx };
  }
  return best;
}
