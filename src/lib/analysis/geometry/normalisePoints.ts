import type { Point } from '../types';

/** Result of {@link normalisePoints}. */
export interface NormalisePointsResult {
  /** The points after `p' = factor·(p − centroid)` (unitless). */
  readonly normalised: Point[];
  /** Centroid of the input (input pixels). */
  readonly centroid: Point;
  /** Multiplier (1/pixel) that makes the mean distance from the centroid √2; 1 if all points coincide. */
  readonly factor: number;
}

/**
 * Hartley-style conditioning: translate the points to their centroid and scale them so the mean
 * distance from the origin is √2. Least-squares fits on conditioned points are far better behaved
 * when coordinates are hundreds of pixels. Returns new objects; the input is not changed.
 *
 * @param points - points in pixels of one image
 * @returns the conditioned points, the centroid (pixels) and the multiplier (1/pixel)
 * @see R. Hartley, "In defense of the eight-point algorithm", IEEE TPAMI 19(6), 1997
 */
export function normalisePoints(points: readonly Point[]): NormalisePointsResult {
  const n = points.length;
  let cx = 0;
  let cy = 0;
  for (const p of points) {
    cx += p.x / n;
    cy += p.y / n;
  }
  let meanDist = 0;
  for (const p of points) meanDist += Math.hypot(p.x - cx, p.y - cy) / n;
  const factor = meanDist > 0 ? Math.SQRT2 / meanDist : 1;
  return {
    normalised: points.map((p) => ({ x: factor * (p.x - cx), y: factor * (p.y - cy) })),
    centroid: { x: cx, y: cy },
    factor,
  };
}
