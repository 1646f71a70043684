import { AnalysisError } from '../errors';
import type { Affine, Point } from '../types';
import { assertFiducialPoints } from './assertFiducialPoints';
import { similarityToAffine } from './similarityToAffine';
import type { Similarity } from './types';

/** Options of {@link fitSimilarity}. */
export interface FitSimilarityOptions {
  /**
   * Also try the mirrored solution (det < 0) and keep whichever fits better. Needs ≥ 3 pairs,
   * since 2 pairs fit both exactly.
   * @default false
   */
  readonly allowReflection?: boolean;
  /**
   * Two points on the same side closer than this (pixels) are treated as one point used twice.
   * @default 1e-6
   */
  readonly duplicateTolerancePx?: number;
}

/** Result of {@link fitSimilarity}. */
export interface FitSimilarityResult {
  /** Rotation + uniform scale (+ mirror) + translation from AFM pixels to fluorescence pixels. */
  readonly flFromAfm: Similarity;
  /** The same map written as a 2×3 matrix, for applyAffine / invertAffine / composeAffine. */
  readonly flFromAfmMatrix: Affine;
  /** Residual distance of each pair (fluorescence pixels), input order. */
  readonly residualsPx: number[];
  /** Residual sum of squares (fluorescence pixels²). */
  readonly rssPx2: number;
  /** Root mean square residual (fluorescence pixels). */
  readonly rmsResidualPx: number;
  /** Number of pairs used. */
  readonly nbFiducials: number;
}

/**
 * Least-squares similarity (rotation, uniform scale, translation; optionally mirrored) from matched
 * fiducials. On centred coordinates the 4-parameter linear problem `x' = a·x ∓ b·y, y' = b·x ± a·y`
 * has a closed form; it gives the same minimiser as Umeyama's SVD solution with free scale.
 *
 * @param afmPoints - fiducials in AFM pixels
 * @param flPoints - the same fiducials in fluorescence pixels, same order
 * @param options - see {@link FitSimilarityOptions}
 * @returns the similarity `flFromAfm`, its matrix and diagnostics
 * @throws AnalysisError `too_few_fiducials` (< 2 pairs, < 3 with reflection), `duplicate_fiducials`,
 *   `degenerate_fiducials` (all fluorescence points fitted to one point, i.e. zero scale)
 * @see S. Umeyama, "Least-squares estimation of transformation parameters between two point patterns", IEEE TPAMI 13(4), 1991
 */
export function fitSimilarity(
  afmPoints: readonly Point[],
  flPoints: readonly Point[],
  options: FitSimilarityOptions = {},
): FitSimilarityResult {
  const { allowReflection = false, duplicateTolerancePx = 1e-6 } = options;
  assertFiducialPoints(afmPoints, flPoints, allowReflection ? 3 : 2, duplicateTolerancePx);
  const n = afmPoints.length;

  // centre both sets
  const mean = (pts: readonly Point[]) => ({
    x: pts.reduce((s, p) => s + p.x, 0) / n,
    y: pts.reduce((s, p) => s + p.y, 0) / n,
  });
  const ca = mean(afmPoints);
  const cf = mean(flPoints);
  let spread = 0;
  let sDot = 0; // Σ px qx + py qy
  let sCross = 0; // Σ px qy − py qx
  let sDotM = 0; // Σ px qx − py qy (mirrored)
  let sCrossM = 0; // Σ py qx + px qy (mirrored)
  for (let i = 0; i < n; i++) {
    const px = afmPoints[i].x - ca.x;
    const py = afmPoints[i].y - ca.y;
    const qx = flPoints[i].x - cf.x;
    const qy = flPoints[i].y - cf.y;
    spread += px * px + py * py;
    sDot += px * qx + py * qy;
    sCross += px * qy - py * qx;
    sDotM += px * qx - py * qy;
    sCrossM += py * qx + px * qy;
  }

  // solve both handednesses, keep the better one
  const candidates = [false, ...(allowReflection ? [true] : [])].map((mirrored) => {
    const a = (mirrored ? sDotM : sDot) / spread;
    const b = (mirrored ? sCrossM : sCross) / spread;
    const similarity: Similarity = {
      scalePxPerPx: Math.hypot(a, b),
      rotationDeg: (Math.atan2(b, a) * 180) / Math.PI,
      mirrored,
      translationXPx: 0,
      translationYPx: 0,
    };
    const [ma, mb, , md, me] = similarityToAffine(similarity);
    const withShift: Similarity = {
      ...similarity,
      translationXPx: cf.x - ma * ca.x - mb * ca.y,
      translationYPx: cf.y - md * ca.x - me * ca.y,
    };
    const matrix = similarityToAffine(withShift);
    const residualsPx = afmPoints.map((p, i) =>
      Math.hypot(
        matrix[0] * p.x + matrix[1] * p.y + matrix[2] - flPoints[i].x,
        matrix[3] * p.x + matrix[4] * p.y + matrix[5] - flPoints[i].y,
      ),
    );
    const rssPx2 = residualsPx.reduce((s, r) => s + r * r, 0);
    return { similarity: withShift, matrix, residualsPx, rssPx2 };
  });
  const best = candidates.reduce((x, y) => (y.rssPx2 < x.rssPx2 ? y : x));
  if (!(best.similarity.scalePxPerPx > 0)) {
    throw new AnalysisError(
      'degenerate_fiducials',
      'The fitted similarity has zero scale (the fluorescence fiducials collapse onto one point); check the pairing.',
      { nbFiducials: n },
    );
  }
  return {
    flFromAfm: best.similarity,
    flFromAfmMatrix: best.matrix,
    residualsPx: best.residualsPx,
    rssPx2: best.rssPx2,
    rmsResidualPx: Math.sqrt(best.rssPx2 / n),
    nbFiducials: n,
  };
}
