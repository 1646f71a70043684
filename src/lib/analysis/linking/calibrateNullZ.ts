import KDBush from 'kdbush';
import { AnalysisError } from '../errors';
import { robustNoiseSigma } from '../fluorescence/robustNoiseSigma';
import type { Point, Raster } from '../types';
import { backgroundPositions } from './backgroundPositions';
import { estimateMarkerAmplitudes } from './estimateMarkerAmplitudes';
import type { CameraModel, NullCalibration } from './types';

/** Options of {@link calibrateNullZ}. */
export interface CalibrateNullZOptions {
  /** PSF standard deviation (px), as for the vesicles' fit. Required. */
  sigmaPx: number;
  /** Camera noise model, as for the vesicles' fit. Required. */
  camera: CameraModel;
  /**
   * Light sources near the places (spots, dim ones included, and beads) (px): each gets its own PSF column in the
   * place's fit, exactly as around a vesicle, so a neighbour's tail inside the window is not read as background.
   * @default none
   */
  sourcesPx?: readonly Point[];
  /**
   * Places keep at least this distance from every position in avoidPx (px).
   * @default 4·sigmaPx
   */
  exclusionRadiusPx?: number;
  /**
   * Lattice spacing of the places (px); each is fitted alone in a ±3σ window.
   * @default 7·sigmaPx
   */
  spacingPx?: number;
  /** Upper limit on the number of places (count). @default 600 */
  maxPositions?: number;
  /** Fewer free places than this leave z uncalibrated (median 0, MAD 1). @default 30 */
  minPlaces?: number;
}

/** Result of {@link calibrateNullZ}. */
export interface CalibrateNullZResult extends NullCalibration {
  /** Centres of the empty places fitted (px). */
  readonly positions: Point[];
  /** Median standard error of the amplitude at those places (counts): the typical noise of a lone PSF amplitude. */
  readonly medianSeCounts: number;
}

/**
 * The null distribution of z = amplitude/SE in one frame, measured where nothing is: a PSF amplitude is fitted at
 * places of a lattice that keep away from every vesicle, bead and detected spot (the caller passes dim spots found at
 * a low threshold too), together with the sources near each place as around a vesicle, and z is summarised by its
 * median and 1.4826·MAD. Robust statistics, not mean and SD,
 * because the few places that still hold an undetected dim emitter or free dye would otherwise widen the null, and
 * more so the denser the sample; median and MAD move little with a few percent of such places. A calibrated
 * z_c = (z − median)/MAD then follows N(0, 1) at empty places whatever the residual error of the camera model.
 * The unconstrained amplitude is used so the null is not clipped at 0.
 *
 * @param raster - fluorescence frame (raw counts); not modified
 * @param avoidPx - vesicles, beads and spots (dim ones included) to keep away from (px); not modified
 * @param options - see {@link CalibrateNullZOptions}
 * @returns median and MAD of z (or 0 and 1 with calibrated false when too few places were free), and the places
 * @see Rousseeuw PJ, Croux C. JASA 88:1273–1283, 1993 (MAD consistency factor 1.4826).
 */
export function calibrateNullZ(raster: Raster, avoidPx: readonly Point[], options: CalibrateNullZOptions): CalibrateNullZResult {
  const { sigmaPx, camera, sourcesPx = [], exclusionRadiusPx = 4 * sigmaPx, spacingPx = 7 * sigmaPx, maxPositions = 600, minPlaces = 30 } = options;
  let positions: Point[];
  try {
    positions = backgroundPositions(raster, avoidPx, { sigmaPx, exclusionRadiusPx, spacingPx, maxPositions, minPositions: minPlaces });
  } catch (e) {
    if (e instanceof AnalysisError && e.code === 'too_few_background_apertures') {
      return { medianZ: 0, madZ: 1, nbPlaces: Number((e.details as { nbCandidates?: number } | undefined)?.nbCandidates ?? 0), calibrated: false, positions: [], medianSeCounts: Number.NaN };
    }
    throw e;
  }
  // sources within reach of a place's window join its fit; further ones fall in other neighbourhoods
  const index = new KDBush(positions.length);
  for (const p of positions) index.add(p.x, p.y);
  index.finish();
  const near = sourcesPx.filter((s) => index.within(s.x, s.y, 8 * sigmaPx).length > 0);
  const fits = estimateMarkerAmplitudes(raster, [...positions, ...near], { sigmaPx, camera, nbQueried: positions.length }).amplitudes.slice(0, positions.length);
  const z = fits.map((f) => f.unconstrainedAmplitudeCounts / f.stdErrCounts).filter(Number.isFinite);
  const se = fits.map((f) => f.stdErrCounts).filter(Number.isFinite);
  if (z.length < minPlaces) return { medianZ: 0, madZ: 1, nbPlaces: z.length, calibrated: false, positions, medianSeCounts: Number.NaN };
  const { median, sigma } = robustNoiseSigma(z);
  return { medianZ: median, madZ: sigma, nbPlaces: z.length, calibrated: true, positions, medianSeCounts: robustNoiseSigma(se).median };
}
