import { AnalysisError } from '../errors';

/**
 * Undo ball-tip broadening of a spherical cap (θ ≤ 90°): a = √(w² − 2hR), from the apparent
 * half-width w, the (unchanged) height h and the tip radius R. Not valid above 90°: there the
 * footprint is R_c + R, not a (docs/references.md §2, AFM caveat).
 *
 * @param apparentHalfWidthNm - measured base half-width w (nm), ≥ 0
 * @param heightNm - measured height h (nm), ≥ 0
 * @param tipRadiusNm - tip apex radius R (nm), ≥ 0
 * @returns corrected base radius a (nm)
 * @throws AnalysisError `tip_broadening_exceeds_width` when w² < 2hR (the tip cannot have produced so narrow an image)
 * @throws RangeError for a negative or non-finite argument
 * @see docs/references.md §3 (cap general form)
 */
export function tipCorrectedBaseRadius(apparentHalfWidthNm: number, heightNm: number, tipRadiusNm: number): number {
  for (const [name, v] of [['apparentHalfWidthNm', apparentHalfWidthNm], ['heightNm', heightNm], ['tipRadiusNm', tipRadiusNm]] as const) {
    if (!(v >= 0) || !Number.isFinite(v)) throw new RangeError(`${name} must be a finite number ≥ 0, got ${v}`);
  }
  const a2 = apparentHalfWidthNm * apparentHalfWidthNm - 2 * heightNm * tipRadiusNm;
  if (a2 < 0) {
    throw new AnalysisError('tip_broadening_exceeds_width', `Half-width ${apparentHalfWidthNm} nm is narrower than a ${tipRadiusNm} nm tip alone would image a ${heightNm} nm high feature (needs w² ≥ 2hR); check the tip radius.`, { apparentHalfWidthNm, heightNm, tipRadiusNm });
  }
  return Math.sqrt(a2);
}
