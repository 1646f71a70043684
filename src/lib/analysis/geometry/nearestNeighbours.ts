import type KDBush from 'kdbush';
import type { Point } from '../types';

/**
 * Indices of the k nearest other points to point `i`, nearest first, using radius queries on a
 * KDBush index (which has no k-NN query of its own) with a growing radius.
 *
 * @param tree - index built by buildPointIndex over `points`
 * @param points - the indexed points (pixels)
 * @param i - index of the query point
 * @param k - number of neighbours wanted
 * @param startRadiusPx - first search radius (pixels), doubled until enough points are found
 * @returns up to k indices, excluding `i`
 */
export function nearestNeighbours(
  tree: KDBush,
  points: readonly Point[],
  i: number,
  k: number,
  startRadiusPx: number,
): number[] {
  const want = Math.min(k, points.length - 1);
  if (want <= 0) return [];
  const p = points[i];
  let radius = Math.max(startRadiusPx, 1e-9);
  let ids: number[] = [];
  for (let round = 0; round < 64; round++) {
    ids = tree.within(p.x, p.y, radius).filter((id) => id !== i && id < points.length);
    if (ids.length >= want) break;
    radius *= 2;
  }
  const dist = (id: number) => Math.hypot(points[id].x - p.x, points[id].y - p.y);
  return ids.sort((a, b) => dist(a) - dist(b)).slice(0, want);
}
