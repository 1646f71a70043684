import { AnalysisError } from '../errors';
import type { Affine, Point } from '../types';
import { decomposeAffine, type DecomposeAffineResult } from './decomposeAffine';
import { describeAffine } from './describeAffine';
import { designConditionNumber } from './designConditionNumber';
import { fitModel } from './fitModel';
import { leaveOneOutTre } from './leaveOneOutTre';
import { normalisePoints } from './normalisePoints';
import { predictTre } from './predictTre';
import { residuals } from './residuals';
import type { FiducialPair, RegistrationModel, Similarity } from './types';

/** Options of {@link evaluateRegistration}. */
export interface EvaluateRegistrationOptions {
  /** AFM pixel size (nm per pixel), from the file metadata. */
  readonly afmPixelNm: number;
  /** Fluorescence pixel size (nm per pixel), from the file metadata. */
  readonly flPixelNm: number;
  /**
   * Transform model.
   * @default 'affine'
   */
  readonly model?: RegistrationModel;
  /**
   * Similarity only: allow a mirrored solution (inverted microscope).
   * @default true
   */
  readonly allowReflection?: boolean;
  /**
   * Warn when the conditioned design's condition number exceeds this (fiducials close to a line).
   * @default 10
   */
  readonly warnConditionNumber?: number;
  /**
   * Warn when a fitted axis scale differs from afmPixelNm / flPixelNm by more than this fraction.
   * @default 0.2
   */
  readonly scaleTolerance?: number;
  /**
   * Extra points (AFM pixels) where the predicted TRE is wanted, e.g. the vesicles.
   * @default []
   */
  readonly targetsAfm?: readonly Point[];
}

/** A non-fatal problem the user should see. */
export interface RegistrationWarning {
  readonly code: 'no_error_estimate' | 'nearly_collinear' | 'scale_mismatch';
  readonly message: string;
}

/** Result of {@link evaluateRegistration}. */
export interface EvaluateRegistrationResult {
  readonly model: RegistrationModel;
  /** The fitted map as a 2×3 matrix (AFM px → fluorescence px). */
  readonly flFromAfm: Affine;
  /** Similarity parameters when model is 'similarity', else null. */
  readonly similarity: Similarity | null;
  readonly decomposition: DecomposeAffineResult;
  /** Words for the UI, see describeAffine. */
  readonly description: string;
  readonly mirrored: boolean;
  readonly nbFiducials: number;
  /** Residual per pair (fluorescence px / nm). */
  readonly residualsPx: number[];
  readonly residualsNm: number[];
  readonly rmsResidualPx: number;
  /** Fiducial registration error (RMS residual, nm). */
  readonly freNm: number;
  /** σ per coordinate from RSS/(2N − p) (fluorescence px); null when N·2 ≤ p. */
  readonly sigmaPx: number | null;
  /** Predicted RMS TRE at the fiducial centroid (nm); null without σ. */
  readonly predictedTreAtCentroidNm: number | null;
  /** Predicted RMS TRE at each fiducial position (nm); null without σ. */
  readonly predictedTreAtFiducialsNm: number[] | null;
  /** Predicted RMS TRE at `targetsAfm` (nm); null without σ. */
  readonly predictedTreAtTargetsNm: number[] | null;
  /** Held-out error per pair (nm); null entries where the refit is degenerate; null if too few pairs. */
  readonly leaveOneOutTreNm: (number | null)[] | null;
  readonly leaveOneOutTreRmsNm: number | null;
  /** Condition number of the conditioned AFM design (unitless). */
  readonly conditionNumber: number;
  /** Expected scale afmPixelNm / flPixelNm (fluorescence px per AFM px). */
  readonly expectedScalePxPerPx: number;
  readonly warnings: RegistrationWarning[];
}

/**
 * Fits the fiducials and gathers everything the registration panel shows: transform, words,
 * residuals and FRE (nm), predicted and leave-one-out TRE (nm), and warnings.
 *
 * @param pairs - fiducials placed on both images (AFM px, fluorescence px)
 * @param options - pixel sizes (nm/px), model and warning thresholds
 * @returns one result object for the UI
 * @throws AnalysisError `too_few_fiducials`, `duplicate_fiducials`, `degenerate_fiducials`
 * @see J. M. Fitzpatrick, J. B. West, C. R. Maurer, IEEE TMI 17(5), 1998 (FRE/TRE)
 */
export function evaluateRegistration(
  pairs: readonly FiducialPair[],
  options: EvaluateRegistrationOptions,
): EvaluateRegistrationResult {
  const {
    afmPixelNm,
    flPixelNm,
    model = 'affine',
    allowReflection = true,
    warnConditionNumber = 10,
    scaleTolerance = 0.2,
    targetsAfm = [],
  } = options;
  if (!(afmPixelNm > 0) || !(flPixelNm > 0)) {
    throw new RangeError(`pixel sizes must be positive nm values; got afm ${afmPixelNm}, fl ${flPixelNm}`);
  }
  const afmPoints = pairs.map((p) => p.afm);
  const flPoints = pairs.map((p) => p.fl);

  // fit
  const fit = fitModel(afmPoints, flPoints, { model, allowReflection });
  const n = fit.nbFiducials;
  const res = residuals(afmPoints, flPoints, fit.flFromAfm, flPixelNm);
  const decomposition = decomposeAffine(fit.flFromAfm);
  const conditionNumber = designConditionNumber(normalisePoints(afmPoints).normalised);
  const warnings: RegistrationWarning[] = [];

  // error estimates
  const dof = 2 * n - fit.nbParameters;
  const sigmaPx = dof > 0 ? Math.sqrt(fit.rssPx2 / dof) : null;
  let predictedTreAtCentroidNm: number | null = null;
  let predictedTreAtFiducialsNm: number[] | null = null;
  let predictedTreAtTargetsNm: number[] | null = null;
  if (sigmaPx !== null) {
    const cx = afmPoints.reduce((s, p) => s + p.x, 0) / n;
    const cy = afmPoints.reduce((s, p) => s + p.y, 0) / n;
    const all = predictTre(afmPoints, [{ x: cx, y: cy }, ...afmPoints, ...targetsAfm], { sigmaPx, model });
    const nm = all.rmsTrePx.map((t) => t * flPixelNm);
    predictedTreAtCentroidNm = nm[0];
    predictedTreAtFiducialsNm = nm.slice(1, 1 + n);
    predictedTreAtTargetsNm = nm.slice(1 + n);
  } else {
    warnings.push({
      code: 'no_error_estimate',
      message: `${n} fiducial pairs fit the ${model} model exactly, so there is no error estimate; place at least ${
        fit.nbParameters / 2 + 1
      }.`,
    });
  }
  let leaveOneOutTreNm: (number | null)[] | null = null;
  let leaveOneOutTreRmsNm: number | null = null;
  if (n >= (model === 'affine' ? 4 : 3)) {
    try {
      const loo = leaveOneOutTre(afmPoints, flPoints, { flPixelNm, model });
      leaveOneOutTreNm = loo.treNm;
      leaveOneOutTreRmsNm = loo.rmsTreNm;
    } catch (error) {
      if (!(error instanceof AnalysisError)) throw error;
    }
  }

  // warnings
  if (conditionNumber > warnConditionNumber) {
    warnings.push({
      code: 'nearly_collinear',
      message: `The AFM fiducials lie close to a line (condition number ${conditionNumber.toFixed(1)} > ${warnConditionNumber}); ` +
        'the transform is poorly fixed across the line. Add a fiducial away from it.',
    });
  }
  const expectedScalePxPerPx = afmPixelNm / flPixelNm;
  for (const [axis, s] of [['x', decomposition.scaleXPxPerPx], ['y', decomposition.scaleYPxPerPx]] as const) {
    if (Math.abs(s / expectedScalePxPerPx - 1) > scaleTolerance) {
      warnings.push({
        code: 'scale_mismatch',
        message: `The fitted ${axis} scale is ${s.toPrecision(3)} fluorescence px per AFM px but the recorded pixel sizes ` +
          `(${afmPixelNm} nm / ${flPixelNm} nm) give ${expectedScalePxPerPx.toPrecision(3)}; check the pairing or the pixel sizes.`,
      });
    }
  }

  return {
    model,
    flFromAfm: fit.flFromAfm,
    similarity: fit.similarity,
    decomposition,
    description: describeAffine(fit.flFromAfm),
    mirrored: decomposition.mirrored,
    nbFiducials: n,
    residualsPx: res.residualsPx,
    residualsNm: res.residualsNm,
    rmsResidualPx: res.rmsResidualPx,
    freNm: res.freNm,
    sigmaPx,
    predictedTreAtCentroidNm,
    predictedTreAtFiducialsNm,
    predictedTreAtTargetsNm,
    leaveOneOutTreNm,
    leaveOneOutTreRmsNm,
    conditionNumber,
    expectedScalePxPerPx,
    warnings,
  };
}
