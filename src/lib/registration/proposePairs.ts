import { findPairsRansac } from '../analysis/geometry';
import { AnalysisError } from '../analysis/errors';
import type { FieldDetection } from '../jobs/detectionTypes';

/**
 * Automatic pairing for a field: AFM fiducial candidates and vesicles against the spots of every
 * channel (a vesicle may light up in any of them). Returns proposals for the analyst to review.
 */
export function proposePairs(det: FieldDetection, o: { afmPixelNm: number; flPixelNm: number; inlierTolerancePx: number }) {
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
  const r = findPairsRansac(afm, fl, { afmPixelNm: o.afmPixelNm, flPixelNm: o.flPixelNm, inlierTolerancePx: o.inlierTolerancePx, seed: 1 });
  return {
    pairs: r.pairs.map((p) => ({ afm: p.afm, fl: p.fl, residualPx: p.residualPx })),
    flFromAfm: [...r.flFromAfm],
    nbInliers: r.nbInliers,
    rmsResidualPx: r.rmsResidualPx,
  };
}
