import type { Affine, Point } from '../types';

/**
 * Maps one point: `x' = a·x + b·y + c`, `y' = d·x + e·y + f`.
 *
 * @param transform - 2×3 map, e.g. `flFromAfm`
 * @param point - point in the transform's input pixels
 * @returns a new point in the transform's output pixels
 */
export function applyAffine(transform: Affine, point: Point): Point {
  const [a, b, c, d, e, f] = transform;
  return { x: a * point.x + b * point.y + c, y: d * point.x + e * point.y + f };
}
