import { AnalysisError } from '../errors';
import type { Point } from '../types';

/**
 * Checks two matched point lists before a fit: same length, finite coordinates, enough pairs,
 * and no point used twice on either side.
 *
 * @param afmPoints - fiducials in AFM pixels
 * @param flPoints - the same fiducials in fluorescence pixels, same order
 * @param minCount - the smallest number of pairs the model needs
 * @param duplicateTolerancePx - two points closer than this (pixels) count as the same point
 * @throws RangeError when the lists differ in length or hold non-finite coordinates (misuse)
 * @throws AnalysisError `too_few_fiducials` when there are fewer than `minCount` pairs
 * @throws AnalysisError `duplicate_fiducials` when a point appears twice on either side
 */
export function assertFiducialPoints(
  afmPoints: readonly Point[],
  flPoints: readonly Point[],
  minCount: number,
  duplicateTolerancePx: number,
): void {
  if (afmPoints.length !== flPoints.length) {
    throw new RangeError(
      `afmPoints has ${afmPoints.length} points but flPoints has ${flPoints.length}; they must be matched pairs`,
    );
  }
  for (const [side, pts] of [['afm', afmPoints], ['fl', flPoints]] as const) {
    pts.forEach((p, i) => {
      if (!Number.isFinite(p.x) || !Number.isFinite(p.y)) {
        throw new RangeError(`${side} point ${i} is (${p.x}, ${p.y}); coordinates must be finite numbers`);
      }
    });
  }
  const n = afmPoints.length;
  if (n < minCount) {
    throw new AnalysisError(
      'too_few_fiducials',
      `Got ${n} fiducial pair(s); this model needs at least ${minCount}. Place more fiducials.`,
      { nbFiducials: n, minFiducials: minCount },
    );
  }
  for (const [side, pts] of [['AFM', afmPoints], ['fluorescence', flPoints]] as const) {
    for (let i = 0; i < n; i++) {
      for (let j = i + 1; j < n; j++) {
        if (Math.hypot(pts[i].x - pts[j].x, pts[i].y - pts[j].y) <= duplicateTolerancePx) {
          throw new AnalysisError(
            'duplicate_fiducials',
            `Fiducials ${i + 1} and ${j + 1} sit on the same ${side} point (${pts[i].x}, ${pts[i].y}); ` +
              'each fiducial must be a distinct point. Remove one of them.',
            { side: side === 'AFM' ? 'afm' : 'fl', indices: [i, j], tolerancePx: duplicateTolerancePx },
          );
        }
      }
    }
  }
}
