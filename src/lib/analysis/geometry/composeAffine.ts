import type { Affine } from '../types';

/**
 * Chains two maps: the result applies `bFromA` first, then `cFromB`
 * (e.g. `composeAffine(screenFromFl, flFromAfm)` gives `screenFromAfm`).
 *
 * @param cFromB - the second map (B pixels → C pixels)
 * @param bFromA - the first map (A pixels → B pixels)
 * @returns the map from A pixels to C pixels
 */
export function composeAffine(cFromB: Affine, bFromA: Affine): Affine {
  const [a2, b2, c2, d2, e2, f2] = cFromB;
  const [a1, b1, c1, d1, e1, f1] = bFromA;
  return [
    a2 * a1 + b2 * d1,
    a2 * b1 + b2 * e1,
    a2 * c1 + b2 * f1 + c2,
    d2 * a1 + e2 * d1,
    d2 * b1 + e2 * e1,
    d2 * c1 + e2 * f1 + f2,
  ];
}
