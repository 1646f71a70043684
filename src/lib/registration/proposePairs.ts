import { findPairsRansac, type RegistrationModel } from '../analysis/geometry';
import { AnalysisError } from '../analysis/errors';
import type { FieldDetection } from '../jobs/detectionTypes';

/** Options of {@link proposePairs}. */
export interface ProposePairsOptions {
  afmPixelNm: number;
  flPixelNm: number;
  /** A mapped AFM feature this close (fluorescence pixels) to a spot counts as its partner. */
  inlierTolerancePx: number;
  /** The model the analyst chose: RANSAC hypotheses and the refinement fit this one. Default 'affine'. */
  model?: RegistrationModel;
}

/**
 * Automatic pairing for a field: AFM fiducial candidates and vesicles against the spots of every
 * channel (a vesicle may light up in any of them). Returns proposals for the analyst to review,
 * with the fitted model and its matrix (AFM px → fluorescence px).
 *
 * @throws AnalysisError `too_few_fiducials`, `no_consistent_pairing`
 */
export function proposePairs(det: FieldDetection, o: ProposePairsOptions) {
  const model = o.model ?? 'affine';
  const afm = [...det.fiducialCandidates, ...det.vesicles].map((p) => ({ x: p.x, y: p.y }));
  // merge spots seen in several channels (same emitter) so each counts once
  const fl: { x: number; y: number }[] = [];
  for (const ch of det.spots) {
    for (const s of ch.spots) {
      if (!fl.some((q) => (q.x - s.x) ** 2 + (q.y - s.y) ** 2 < 1.5 ** 2)) fl.push({ x: s.x, y: s.y });
    }
  }
  if (afm.length < 3 || fl.length < 3) {
    throw new AnalysisError('too_few_fiducials', `Automatic pairing needs at least 3 features on each side; found ${afm.length} in the height map and ${fl.length} spots.`);
  }
  const r = findPairsRansac(afm, fl, { afmPixelNm: o.afmPixelNm, flPixelNm: o.flPixelNm, inlierTolerancePx: o.inlierTolerancePx, seed: 1, model });
  return {
    pairs: r.pairs.map((p) => ({ afm: p.afm, fl: p.fl, residualPx: p.residualPx })),
    model: r.model,
    flFromAfm: [...r.flFromAfm],
    nbInliers: r.nbInliers,
    rmsResidualPx: r.rmsResidualPx,
  };
}
