import { AnalysisError } from '../errors';
import type { Affine } from '../types';

/**
 * Inverse of a 2×3 map, e.g. `afmFromFl = invertAffine(flFromAfm)`.
 *
 * @param transform - 2×3 map with a non-zero determinant
 * @returns the inverse map (output pixels → input pixels)
 * @throws AnalysisError `singular_transform` when the determinant is 0 relative to the entries
 */
export function invertAffine(transform: Affine): Affine {
  const [a, b, c, d, e, f] = transform;
  const det = a * e - b * d;
  const size = Math.max(Math.abs(a), Math.abs(b), Math.abs(d), Math.abs(e));
  if (!(Math.abs(det) > 1e-14 * size * size)) {
    throw new AnalysisError(
      'singular_transform',
      `The transform squashes the plane onto a line (determinant ${det}); it has no inverse.`,
      { determinant: det },
    );
  }
  const ia = e / det;
  const ib = -b / det;
  const id = -d / det;
  const ie = a / det;
  return [ia, ib, -(ia * c + ib * f), id, ie, -(id * c + ie * f)];
}
