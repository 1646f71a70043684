import type { Affine, Point } from '../types';
import { applyAffine } from './applyAffine';
import { snapToNearest } from './snapToNearest';

/** Options of {@link proposePartner}. */
export interface ProposePartnerOptions {
  /**
   * Largest distance (fluorescence pixels) between the prediction and a candidate.
   * @default 3
   */
  readonly maxDistancePx?: number;
}

/** Result of {@link proposePartner}. */
export interface ProposePartnerResult {
  /** Where the current transform puts the AFM point (fluorescence pixels). */
  readonly predicted: Point;
  /** Nearest fluorescence candidate to the prediction, or null if none is within range. */
  readonly candidate: { readonly index: number; readonly point: Point; readonly distancePx: number } | null;
}

/**
 * After a few pairs exist (≥ 3 for an affine fit), suggests the fluorescence partner of a new AFM
 * point: map it with the current transform, then snap to the nearest detected spot.
 *
 * @param afmPoint - new fiducial in AFM pixels
 * @param flFromAfm - current transform (AFM px → fluorescence px)
 * @param flCandidates - detected spots (fluorescence pixels)
 * @param options - see {@link ProposePartnerOptions}
 * @returns the predicted position and the snapped candidate (or null)
 */
export function proposePartner(
  afmPoint: Point,
  flFromAfm: Affine,
  flCandidates: readonly Point[],
  options: ProposePartnerOptions = {},
): ProposePartnerResult {
  const { maxDistancePx = 3 } = options;
  const predicted = applyAffine(flFromAfm, afmPoint);
  return { predicted, candidate: snapToNearest(predicted, flCandidates, maxDistancePx) };
}
