import type { Affine } from '../types';
import type { Similarity } from './types';

/**
 * Writes a {@link Similarity} as the 2×3 matrix `[a, b, c, d, e, f]` so it can be applied, inverted
 * and composed with the affine helpers. The matrix is a special case of an affine map; the
 * similarity itself keeps its own type.
 *
 * @param similarity - rotation (deg), uniform scale (px/px), mirror flag and translation (px)
 * @returns the equivalent 2×3 matrix
 */
export function similarityToAffine(similarity: Similarity): Affine {
  const { scalePxPerPx, rotationDeg, mirrored, translationXPx, translationYPx } = similarity;
  const theta = (rotationDeg * Math.PI) / 180;
  const kc = scalePxPerPx * Math.cos(theta);
  const ks = scalePxPerPx * Math.sin(theta);
  // k·R(θ)·diag(1, ±1)
  return mirrored
    ? [kc, ks, translationXPx, ks, -kc, translationYPx]
    : [kc, -ks, translationXPx, ks, kc, translationYPx];
}
