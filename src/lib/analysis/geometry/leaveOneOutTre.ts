import { AnalysisError } from '../errors';
import type { Point } from '../types';
import { applyAffine } from './applyAffine';
import { fitModel } from './fitModel';
import type { RegistrationModel } from './types';

/** Options of {@link leaveOneOutTre}. */
export interface LeaveOneOutTreOptions {
  /**
   * Fluorescence pixel size (nm per pixel) for the nm outputs.
   * @default 1
   */
  readonly flPixelNm?: number;
  /**
   * Model refitted each time.
   * @default 'affine'
   */
  readonly model?: RegistrationModel;
}

/** Result of {@link leaveOneOutTre}. */
export interface LeaveOneOutTreResult {
  /** Distance between fl_i and the prediction of the fit without pair i (fluorescence px); null if that refit is degenerate. */
  readonly trePx: (number | null)[];
  /** The same in nm. */
  readonly treNm: (number | null)[];
  /** RMS over the non-null entries (fluorescence px); null if none. */
  readonly rmsTrePx: number | null;
  /** RMS over the non-null entries (nm); null if none. */
  readonly rmsTreNm: number | null;
  readonly nbFiducials: number;
}

/**
 * Held-out target registration error: for each pair, refit without it and measure how far its
 * fluorescence point lies from the prediction. It includes the held-out point's own localisation
 * error, so its mean square exceeds the predicted TRE² by about 2σ².
 *
 * @param afmPoints - fiducials in AFM pixels
 * @param flPoints - the same fiducials in fluorescence pixels
 * @param options - see {@link LeaveOneOutTreOptions}
 * @returns per-pair held-out errors (px, nm) and their RMS
 * @throws AnalysisError `too_few_fiducials` when removing one pair leaves too few to fit
 * @see J. M. Fitzpatrick, J. B. West, "The distribution of target registration error in rigid-body point-based registration", IEEE TMI 20(9), 2001 (TRE definition)
 */
export function leaveOneOutTre(
  afmPoints: readonly Point[],
  flPoints: readonly Point[],
  options: LeaveOneOutTreOptions = {},
): LeaveOneOutTreResult {
  const { flPixelNm = 1, model = 'affine' } = options;
  const minCount = model === 'affine' ? 4 : 3;
  const n = afmPoints.length;
  if (n < minCount) {
    throw new AnalysisError(
      'too_few_fiducials',
      `Leave-one-out needs at least ${minCount} fiducial pairs for the ${model} model; got ${n}.`,
      { nbFiducials: n, minFiducials: minCount },
    );
  }
  const trePx = afmPoints.map((p, i) => {
    const keep = (_: Point, j: number) => j !== i;
    try {
      const fit = fitModel(afmPoints.filter(keep), flPoints.filter(keep), { model, allowReflection: true });
      const q = applyAffine(fit.flFromAfm, p);
      return Math.hypot(q.x - flPoints[i].x, q.y - flPoints[i].y);
    } catch (error) {
      if (error instanceof AnalysisError) return null;
      throw error;
    }
  });
  const valid = trePx.filter((t): t is number => t !== null);
  const rmsTrePx = valid.length > 0 ? Math.sqrt(valid.reduce((s, t) => s + t * t, 0) / valid.length) : null;
  return {
    trePx,
    treNm: trePx.map((t) => (t === null ? null : t * flPixelNm)),
    rmsTrePx,
    rmsTreNm: rmsTrePx === null ? null : rmsTrePx * flPixelNm,
    nbFiducials: n,
  };
}
