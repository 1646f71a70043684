import KDBush from 'kdbush';
import type { Point } from '../types';

/**
 * Static k-d tree over points for radius queries (ids are input indices).
 *
 * @param points - points in pixels of one image
 * @returns a finished KDBush index
 */
export function buildPointIndex(points: readonly Point[]): KDBush {
  const index = new KDBush(Math.max(points.length, 1));
  for (const p of points) index.add(p.x, p.y);
  if (points.length === 0) index.add(Number.MAX_VALUE, Number.MAX_VALUE);
  return index.finish();
}
