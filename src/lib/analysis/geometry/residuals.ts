import type { Affine, Point } from '../types';
import { applyAffine } from './applyAffine';

/** Result of {@link residuals}. */
export interface ResidualsResult {
  /** ‖T(afm_i) − fl_i‖ per pair (fluorescence pixels). */
  readonly residualsPx: number[];
  /** The same in nanometres. */
  readonly residualsNm: number[];
  /** Root mean square residual (fluorescence pixels). */
  readonly rmsResidualPx: number;
  /** Fiducial registration error = RMS residual (nm). */
  readonly freNm: number;
  readonly nbFiducials: number;
}

/**
 * Per-pair residuals of a registration and the fiducial registration error
 * FRE² = (1/N)·Σ‖T(p_i) − q_i‖².
 *
 * @param afmPoints - fiducials in AFM pixels
 * @param flPoints - the same fiducials in fluorescence pixels
 * @param flFromAfm - the map being judged
 * @param flPixelNm - fluorescence pixel size (nm per pixel)
 * @returns residuals in px and nm, RMS (px) and FRE (nm)
 * @throws RangeError when the lists differ in length or are empty
 * @see J. M. Fitzpatrick, J. B. West, C. R. Maurer, "Predicting error in rigid-body point-based registration", IEEE TMI 17(5), 1998
 */
export function residuals(
  afmPoints: readonly Point[],
  flPoints: readonly Point[],
  flFromAfm: Affine,
  flPixelNm: number,
): ResidualsResult {
  if (afmPoints.length !== flPoints.length || afmPoints.length === 0) {
    throw new RangeError(`need matched, non-empty point lists; got ${afmPoints.length} and ${flPoints.length}`);
  }
  const residualsPx = afmPoints.map((p, i) => {
    const q = applyAffine(flFromAfm, p);
    return Math.hypot(q.x - flPoints[i].x, q.y - flPoints[i].y);
  });
  const rmsResidualPx = Math.sqrt(residualsPx.reduce((s, r) => s + r * r, 0) / residualsPx.length);
  return {
    residualsPx,
    residualsNm: residualsPx.map((r) => r * flPixelNm),
    rmsResidualPx,
    freNm: rmsResidualPx * flPixelNm,
    nbFiducials: residualsPx.length,
  };
}
