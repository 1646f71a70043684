import { AnalysisError } from '../errors';
import type { Point } from '../types';
import type { RegistrationModel } from './types';

/** Options of {@link predictTre}. */
export interface PredictTreOptions {
  /** Localisation noise σ per coordinate of the fluorescence points (fluorescence pixels). */
  readonly sigmaPx: number;
  /**
   * Model the fit used.
   * @default 'affine'
   */
  readonly model?: RegistrationModel;
}

/** Result of {@link predictTre}. */
export interface PredictTreResult {
  /** E[TRE²] at each target (fluorescence px²). */
  readonly expectedTreSquaredPx2: number[];
  /** √E[TRE²] at each target (fluorescence px). */
  readonly rmsTrePx: number[];
  readonly nbFiducials: number;
}

/**
 * Expected squared target registration error from the least-squares prediction variance, with noise
 * σ per coordinate on the fluorescence side only. Affine: E[TRE²(t)] = 2σ²·(1/N + dᵀS⁻¹d), with
 * d = t − centroid and S = Σ(p_i − p̄)(p_i − p̄)ᵀ of the AFM fiducials. Similarity (linear 4-parameter
 * form, whose design columns are orthogonal on centred points): 2σ²·(1/N + ‖d‖²/Σ‖p_i − p̄‖²).
 * If both point sets are noisy this is first-order only.
 *
 * @param afmPoints - fiducials in AFM pixels
 * @param targetsAfm - where to predict the error (AFM pixels)
 * @param options - σ (fluorescence px) and model
 * @returns E[TRE²] (px²) and its square root (px) per target
 * @throws AnalysisError `degenerate_fiducials` when S is singular (collinear fiducials)
 * @see G. A. F. Seber, A. J. Lee, Linear Regression Analysis, 2nd ed., Wiley 2003 (prediction variance)
 */
export function predictTre(
  afmPoints: readonly Point[],
  targetsAfm: readonly Point[],
  options: PredictTreOptions,
): PredictTreResult {
  const { sigmaPx, model = 'affine' } = options;
  const n = afmPoints.length;
  const cx = afmPoints.reduce((s, p) => s + p.x, 0) / n;
  const cy = afmPoints.reduce((s, p) => s + p.y, 0) / n;
  let sxx = 0;
  let sxy = 0;
  let syy = 0;
  for (const p of afmPoints) {
    sxx += (p.x - cx) ** 2;
    sxy += (p.x - cx) * (p.y - cy);
    syy += (p.y - cy) ** 2;
  }
  const det = sxx * syy - sxy * sxy;
  const degenerate = model === 'affine' ? !(det > 1e-12 * (sxx + syy) ** 2) : !(sxx + syy > 0);
  if (degenerate) {
    throw new AnalysisError(
      'degenerate_fiducials',
      'The AFM fiducials are collinear, so the prediction error is unbounded away from their line.',
      { nbFiducials: n },
    );
  }
  const leverage = (t: Point) => {
    const dx = t.x - cx;
    const dy = t.y - cy;
    if (model === 'similarity') return 1 / n + (dx * dx + dy * dy) / (sxx + syy);
    // dᵀ S⁻¹ d with S⁻¹ = [[syy, −sxy], [−sxy, sxx]] / det
    return 1 / n + (syy * dx * dx - 2 * sxy * dx * dy + sxx * dy * dy) / det;
  };
  const expectedTreSquaredPx2 = targetsAfm.map((t) => 2 * sigmaPx * sigmaPx * leverage(t));
  return { expectedTreSquaredPx2, rmsTrePx: expectedTreSquaredPx2.map(Math.sqrt), nbFiducials: n };
}
