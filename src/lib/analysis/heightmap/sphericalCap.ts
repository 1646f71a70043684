import type { SphericalCapResult } from './types';

/**
 * Geometry of a spherical cap of base radius a and height h: sphere radius R_c = (a² + h²)/(2h),
 * contact angle θ = 2·atan(h/a) (inside the cap, any h), volume πh(3a² + h²)/6, curved and total
 * areas, volume-equivalent sphere diameter (6V/π)^(1/3) and the area-conserving diameter
 * √(2a² + h²) (a sphere with the cap's total area, curved part plus base).
 *
 * @param baseRadiusNm - base radius a (nm), > 0
 * @param heightNm - cap height h (nm), > 0
 * @returns all derived quantities (nm, nm², nm³, degrees)
 * @throws RangeError when a or h is not a positive finite number
 * @see docs/references.md §2 (handbook cap relations a² + h² = 2hR; cap volume)
 * @see Ridolfi A et al. 2020, Anal Chem 92(15):10274–10282 (EVs modelled as caps; area-conserving diameter, from memory)
 */
export function sphericalCap(baseRadiusNm: number, heightNm: number): SphericalCapResult {
  if (!(baseRadiusNm > 0) || !Number.isFinite(baseRadiusNm)) throw new RangeError(`baseRadiusNm must be a positive finite number, got ${baseRadiusNm}`);
  if (!(heightNm > 0) || !Number.isFinite(heightNm)) throw new RangeError(`heightNm must be a positive finite number, got ${heightNm}`);
  const a = baseRadiusNm;
  const h = heightNm;
  const volumeNm3 = (Math.PI * h * (3 * a * a + h * h)) / 6;
  return {
    baseRadiusNm: a,
    heightNm: h,
    sphereRadiusNm: (a * a + h * h) / (2 * h),
    contactAngleDeg: (2 * Math.atan(h / a) * 180) / Math.PI,
    volumeNm3,
    capAreaNm2: Math.PI * (a * a + h * h),
    totalAreaNm2: Math.PI * (2 * a * a + h * h),
    volumeEquivalentDiameterNm: Math.cbrt((6 * volumeNm3) / Math.PI),
    areaConservingDiameterNm: Math.sqrt(2 * a * a + h * h),
  };
}
