import { sphericalCap } from './sphericalCap';
import type { TipCorrectedCapResult } from './types';

/**
 * The spherical cap under a ball-tip image. A cap of height h on a sphere of radius R_c (θ ≤ 90°), imaged with a
 * ball tip of radius R, appears as a cap of the same height on a sphere of radius R_c + R (its base half-width is
 * then √(a² + 2hR)); so R_c = R_image − R and the true base radius is a = √(h(2R_c − h)).
 *
 * @param imageSphereRadiusNm - sphere radius of the imaged surface (nm), > 0
 * @param heightNm - cap height h (nm), > 0
 * @param tipRadiusNm - tip apex radius R (nm), ≥ 0; 0 = not known (the imaged cap is returned, flagged)
 * @returns the cap and a flag: 'no_tip_radius' (cap not corrected), 'tip_exceeds_image' or 'overhang' (cap null)
 * @throws RangeError for a non-positive radius or height, or a negative tip radius
 * @see docs/references.md §2 (a² + h² = 2hR_c) and §3 (a′ = √(a² + 2hR))
 */
export function tipCorrectedCap(imageSphereRadiusNm: number, heightNm: number, tipRadiusNm: number): TipCorrectedCapResult {
  if (!(imageSphereRadiusNm > 0) || !Number.isFinite(imageSphereRadiusNm)) throw new RangeError(`imageSphereRadiusNm must be a positive finite number, got ${imageSphereRadiusNm}`);
  if (!(heightNm > 0) || !Number.isFinite(heightNm)) throw new RangeError(`heightNm must be a positive finite number, got ${heightNm}`);
  if (!(tipRadiusNm >= 0) || !Number.isFinite(tipRadiusNm)) throw new RangeError(`tipRadiusNm must be a finite number ≥ 0, got ${tipRadiusNm}`);
  const sphereRadiusNm = imageSphereRadiusNm - tipRadiusNm;
  if (!(sphereRadiusNm > 0)) return { cap: null, flag: 'tip_exceeds_image' };
  // θ > 90° (R_c < h): the image of an overhanging cap is not a cap of radius R_c + R, and the undercut is unseen
  if (sphereRadiusNm < heightNm) return { cap: null, flag: 'overhang' };
  const baseRadiusNm = Math.sqrt(heightNm * (2 * sphereRadiusNm - heightNm));
  return { cap: sphericalCap(baseRadiusNm, heightNm), flag: tipRadiusNm > 0 ? null : 'no_tip_radius' };
}
