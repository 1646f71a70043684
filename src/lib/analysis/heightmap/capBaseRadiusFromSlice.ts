import { AnalysisError } from '../errors';

/**
 * Base radius at height 0 of a spherical cap known from its apex height h and the radius r_t of its
 * horizontal slice at height t (e.g. the thresholded footprint). The part above t is a cap of height
 * h − t and base r_t, so R_c = (r_t² + (h − t)²)/(2(h − t)) and a = √(h(2R_c − h)).
 *
 * @param sliceRadiusNm - radius of the slice r_t (nm), ≥ 0
 * @param sliceHeightNm - height of the slice t (nm), 0 ≤ t < h
 * @param apexHeightNm - apex height h (nm)
 * @returns base radius a (nm); equals r_t when t = 0
 * @throws AnalysisError `not_a_cap` when t ≥ h or the numbers describe no cap with θ ≤ 180° (2R_c < h)
 * @throws RangeError for a negative or non-finite argument
 * @see docs/references.md §2 (a² + h² = 2hR_c)
 */
export function capBaseRadiusFromSlice(sliceRadiusNm: number, sliceHeightNm: number, apexHeightNm: number): number {
  for (const [name, v] of [['sliceRadiusNm', sliceRadiusNm], ['sliceHeightNm', sliceHeightNm], ['apexHeightNm', apexHeightNm]] as const) {
    if (!(v >= 0) || !Number.isFinite(v)) throw new RangeError(`${name} must be a finite number ≥ 0, got ${v}`);
  }
  const hAbove = apexHeightNm - sliceHeightNm;
  if (!(hAbove > 0)) {
    throw new AnalysisError('not_a_cap', `Apex ${apexHeightNm} nm is not above the slice at ${sliceHeightNm} nm.`, { apexHeightNm, sliceHeightNm });
  }
  if (sliceHeightNm === 0) return sliceRadiusNm;
  const sphereRadiusNm = (sliceRadiusNm * sliceRadiusNm + hAbove * hAbove) / (2 * hAbove);
  const a2 = apexHeightNm * (2 * sphereRadiusNm - apexHeightNm);
  if (!(a2 >= 0)) {
    throw new AnalysisError('not_a_cap', `A slice of radius ${sliceRadiusNm} nm at ${sliceHeightNm} nm below an apex of ${apexHeightNm} nm fits no spherical cap.`, { sliceRadiusNm, sliceHeightNm, apexHeightNm });
  }
  return Math.sqrt(a2);
}
