import { Matrix, SVD } from 'ml-matrix';
import { AnalysisError } from '../errors';
import type { Affine, Point } from '../types';
import { assertFiducialPoints } from './assertFiducialPoints';
import { designConditionNumber } from './designConditionNumber';
import { normalisePoints } from './normalisePoints';

/** Options of {@link fitAffine}. */
export interface FitAffineOptions {
  /**
   * Refuse the fit when the conditioned design matrix of either point set has a condition number
   * above this (points on, or numerically on, a line).
   * @default 1e6
   */
  readonly maxConditionNumber?: number;
  /**
   * Two points on the same side closer than this (pixels) are treated as one point used twice.
   * @default 1e-6
   */
  readonly duplicateTolerancePx?: number;
}

/** Result of {@link fitAffine}. */
export interface FitAffineResult {
  /** The 6-parameter map from AFM pixels to fluorescence pixels. */
  readonly flFromAfm: Affine;
  /** Residual distance of each pair after the fit (fluorescence pixels), input order. */
  readonly residualsPx: number[];
  /** Residual sum of squares (fluorescence pixels²). */
  readonly rssPx2: number;
  /** Root mean square residual (fluorescence pixels). */
  readonly rmsResidualPx: number;
  /** Number of pairs used. */
  readonly nbFiducials: number;
  /** Condition number of the conditioned AFM design matrix (unitless); large means nearly collinear. */
  readonly conditionNumber: number;
}

/**
 * Least-squares 2-D affine map from matched fiducials (3 pairs fit exactly; more are averaged).
 * Both point sets are conditioned first (centroid to 0, mean distance √2) and the 3-column design
 * is solved by SVD. A mirrored pairing (det < 0) is fitted like any other.
 *
 * @param afmPoints - fiducials in AFM pixels
 * @param flPoints - the same fiducials in fluorescence pixels, same order
 * @param options - see {@link FitAffineOptions}
 * @returns the map `flFromAfm` with its residuals and diagnostics
 * @throws AnalysisError `too_few_fiducials` (< 3 pairs), `duplicate_fiducials`, `degenerate_fiducials` (collinear)
 * @see R. Hartley, "In defense of the eight-point algorithm", IEEE TPAMI 19(6), 1997 (conditioning)
 */
export function fitAffine(
  afmPoints: readonly Point[],
  flPoints: readonly Point[],
  options: FitAffineOptions = {},
): FitAffineResult {
  const { maxConditionNumber = 1e6, duplicateTolerancePx = 1e-6 } = options;
  assertFiducialPoints(afmPoints, flPoints, 3, duplicateTolerancePx);
  const n = afmPoints.length;

  // condition both sides
  const afm = normalisePoints(afmPoints);
  const fl = normalisePoints(flPoints);
  const conditionNumber = designConditionNumber(afm.normalised);
  const flConditionNumber = designConditionNumber(fl.normalised);
  for (const [side, cond] of [['AFM', conditionNumber], ['fluorescence', flConditionNumber]] as const) {
    if (!(cond <= maxConditionNumber)) {
      throw new AnalysisError(
        'degenerate_fiducials',
        `The ${side} fiducials lie on (or very nearly on) one straight line (condition number ${cond.toExponential(2)}, ` +
          `limit ${maxConditionNumber.toExponential(0)}); an affine map needs at least 3 points that span an area. ` +
          'Add a fiducial away from the line.',
        { side: side === 'AFM' ? 'afm' : 'fl', conditionNumber: cond, maxConditionNumber, nbFiducials: n },
      );
    }
  }

  // solve [xn yn 1]·M ≈ [x'n y'n] in the least-squares sense
  const design = new Matrix(afm.normalised.map((p) => [p.x, p.y, 1]));
  const target = new Matrix(fl.normalised.map((p) => [p.x, p.y]));
  const m = new SVD(design, { autoTranspose: true }).solve(target);

  // undo the conditioning: q = (1/kF)·(Ln·kA·(p − cA) + tn) + cF
  const ratio = afm.factor / fl.factor;
  const a = ratio * m.get(0, 0);
  const b = ratio * m.get(1, 0);
  const d = ratio * m.get(0, 1);
  const e = ratio * m.get(1, 1);
  const c = m.get(2, 0) / fl.factor + fl.centroid.x - a * afm.centroid.x - b * afm.centroid.y;
  const f = m.get(2, 1) / fl.factor + fl.centroid.y - d * afm.centroid.x - e * afm.centroid.y;
  const flFromAfm: Affine = [a, b, c, d, e, f];

  // score
  const residualsPx = afmPoints.map((p, i) =>
    Math.hypot(a * p.x + b * p.y + c - flPoints[i].x, d * p.x + e * p.y + f - flPoints[i].y),
  );
  const rssPx2 = residualsPx.reduce((s, r) => s + r * r, 0);
  return {
    flFromAfm,
    residualsPx,
    rssPx2,
    rmsResidualPx: Math.sqrt(rssPx2 / n),
    nbFiducials: n,
    conditionNumber,
  };
}
