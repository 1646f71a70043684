import type { FiducialPair } from '../geometry';
import { snapToNearest } from '../geometry';
import type { Point } from '../types';
import type { FiducialRefinement } from './types';

/** Options of {@link refineFiducialPairs}. */
export interface RefineFiducialPairsOptions {
  /** Label map of the AFM detection, row-major (0 = background). */
  labels: Int32Array;
  /** Width of the label map (px). */
  width: number;
  /** Sub-pixel centroid of every labelled AFM region, by label (AFM px). */
  centroidByLabel: ReadonlyMap<number, Point>;
  /** Detected spots per channel (fluorescence px). */
  spotsPerChannel: readonly (readonly Point[])[];
  /** Largest snap distance in each image (px of that image). */
  afmRadiusPx: number;
  flRadiusPx: number;
  /** Pixel sizes, to report the moves in nm (nm/px). */
  afmPixelNm: number;
  flPixelNm: number;
}

/**
 * Refines fiducials placed by hand: the AFM pick moves to the centroid of the detected region under it (or the
 * nearest region centroid within the radius when the pick missed every region); the fluorescence pick moves to the
 * mean of the nearest spot within the radius in each channel (a multicolour bead shows in every channel). A pick
 * with nothing under it stays as given and is reported as not snapped.
 *
 * @param pairs - picks (AFM px, fluorescence px); not modified
 * @param options - candidates and radii; see {@link RefineFiducialPairsOptions}
 * @returns one refinement per pick, same order, with the distance each side moved (px and nm)
 */
export function refineFiducialPairs(pairs: readonly FiducialPair[], options: RefineFiducialPairsOptions): FiducialRefinement[] {
  const { labels, width, centroidByLabel, spotsPerChannel, afmRadiusPx, flRadiusPx, afmPixelNm, flPixelNm } = options;
  const height = labels.length / width;
  const centroids = [...centroidByLabel.values()];
  return pairs.map((given) => {
    // AFM: the region under the pick, else the nearest region centroid
    let afm: Point | null = null;
    const col = Math.round(given.afm.x);
    const row = Math.round(given.afm.y);
    if (col >= 0 && col < width && row >= 0 && row < height) {
      const label = labels[row * width + col];
      if (label > 0) afm = centroidByLabel.get(label) ?? null;
    }
    if (afm && Math.hypot(afm.x - given.afm.x, afm.y - given.afm.y) > afmRadiusPx) afm = null;
    afm ??= snapToNearest(given.afm, centroids, afmRadiusPx)?.point ?? null;

    // fluorescence: nearest spot per channel, averaged
    let sx = 0;
    let sy = 0;
    let n = 0;
    for (const spots of spotsPerChannel) {
      const hit = snapToNearest(given.fl, spots, flRadiusPx);
      if (hit) {
        sx += hit.point.x;
        sy += hit.point.y;
        n++;
      }
    }
    const fl = n > 0 ? { x: sx / n, y: sy / n } : null;
    const refined: FiducialPair = { afm: afm ?? { ...given.afm }, fl: fl ?? { ...given.fl } };
    const afmMovedPx = Math.hypot(refined.afm.x - given.afm.x, refined.afm.y - given.afm.y);
    const flMovedPx = Math.hypot(refined.fl.x - given.fl.x, refined.fl.y - given.fl.y);
    return {
      given: { afm: { ...given.afm }, fl: { ...given.fl } },
      refined,
      afmSnapped: afm !== null,
      flSnapped: fl !== null,
      afmMovedPx,
      afmMovedNm: afmMovedPx * afmPixelNm,
      flMovedPx,
      flMovedNm: flMovedPx * flPixelNm,
    };
  });
}
