import { Matrix, SVD } from 'ml-matrix';
import type { Point } from '../types';

/**
 * Condition number (largest / smallest singular value) of the design matrix `[x y 1]` built from
 * conditioned points (see `normalisePoints`). About 1 for well-spread points; it grows as the points
 * approach a line and is `Infinity` when they are exactly collinear.
 *
 * @param normalisedPoints - points already centred and scaled to mean distance √2 (unitless)
 * @returns the condition number (unitless, ≥ 1)
 */
export function designConditionNumber(normalisedPoints: readonly Point[]): number {
  const design = new Matrix(normalisedPoints.map((p) => [p.x, p.y, 1]));
  const s = new SVD(design, { computeLeftSingularVectors: false, computeRightSingularVectors: false }).diagonal;
  const sMax = Math.max(...s);
  const sMin = Math.min(...s);
  return sMin > 0 ? sMax / sMin : Infinity;
}
