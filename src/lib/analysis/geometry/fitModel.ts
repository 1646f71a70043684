import type { Affine, Point } from '../types';
import { fitAffine } from './fitAffine';
import { fitSimilarity } from './fitSimilarity';
import type { RegistrationModel, Similarity } from './types';

/** Options of {@link fitModel}. */
export interface FitModelOptions {
  /**
   * Which transform to fit.
   * @default 'affine'
   */
  readonly model?: RegistrationModel;
  /**
   * Similarity only: also try the mirrored solution. The affine model always allows mirrors.
   * @default true
   */
  readonly allowReflection?: boolean;
}

/** Result of {@link fitModel}. */
export interface FitModelResult {
  readonly model: RegistrationModel;
  /** The fitted map as a 2×3 matrix (AFM px → fluorescence px). */
  readonly flFromAfm: Affine;
  /** The similarity parameters when `model` is 'similarity', else null. */
  readonly similarity: Similarity | null;
  /** Residual per pair (fluorescence pixels). */
  readonly residualsPx: number[];
  /** Residual sum of squares (fluorescence pixels²). */
  readonly rssPx2: number;
  /** Root mean square residual (fluorescence pixels). */
  readonly rmsResidualPx: number;
  readonly nbFiducials: number;
  /** Number of free parameters (6 affine, 4 similarity). */
  readonly nbParameters: number;
}

/**
 * Fits the chosen registration model and returns it in one shape (matrix + residuals).
 *
 * @param afmPoints - fiducials in AFM pixels
 * @param flPoints - the same fiducials in fluorescence pixels
 * @param options - see {@link FitModelOptions}
 * @returns the fitted map and its residuals
 * @throws AnalysisError as fitAffine / fitSimilarity
 */
export function fitModel(
  afmPoints: readonly Point[],
  flPoints: readonly Point[],
  options: FitModelOptions = {},
): FitModelResult {
  const { model = 'affine', allowReflection = true } = options;
  if (model === 'affine') {
    const r = fitAffine(afmPoints, flPoints);
    return { model, flFromAfm: r.flFromAfm, similarity: null, residualsPx: r.residualsPx, rssPx2: r.rssPx2,
      rmsResidualPx: r.rmsResidualPx, nbFiducials: r.nbFiducials, nbParameters: 6 };
  }
  const r = fitSimilarity(afmPoints, flPoints, { allowReflection: allowReflection && afmPoints.length >= 3 });
  return { model, flFromAfm: r.flFromAfmMatrix, similarity: r.flFromAfm, residualsPx: r.residualsPx, rssPx2: r.rssPx2,
    rmsResidualPx: r.rmsResidualPx, nbFiducials: r.nbFiducials, nbParameters: 4 };
}
