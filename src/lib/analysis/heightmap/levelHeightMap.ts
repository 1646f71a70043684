import { AnalysisError } from '../errors';
import type { Raster } from '../types';
import { backgroundRowMedians } from './backgroundRowMedians';
import { blockMedianSurface } from './blockMedianSurface';
import { fitSurface } from './fitSurface';
import { removeTrend } from './removeTrend';
import { robustSigma } from './robustSigma';
import { subtractSurfaceAndRows } from './subtractSurfaceAndRows';
import { BASIS_PLANE, BASIS_POLY2, surfaceFrame } from './surfaceRow';
import type { BackgroundSurface, LevelHeightMapOptions, LevelHeightMapResult } from './types';
import { updateBackgroundMask } from './updateBackgroundMask';
import { validateRaster } from './validateRaster';

/** Samples used for the median/MAD of the background (regular subsample, see robustSigma). */
const ROBUST_MAX_SAMPLES = 1 << 17;
/** Floor of the robust sigma so a noise-free map still separates particles from a flat background (nm). */
const MIN_SIGMA_NM = 1e-6;
/**
 * Half-width of the bracket around each guessed row median, in background sigmas: about 8 % of a row's values
 * fall inside. The guesses from the sparse whole-row start are rougher (particles included), hence the wider
 * bracket. On the standard field every row then lands inside; a miss only costs a full selection.
 */
const ROW_BRACKET_SIGMAS = 0.1;
const ROW_BRACKET_SIGMAS_AFTER_START = 0.3;

/**
 * Level an AFM height map: least-squares background surface (plane or second-order polynomial)
 * fitted on background pixels only, then scan-line alignment (each row shifted by the median of
 * its background pixels). Particles are excluded iteratively: residuals above
 * median + k·(1.4826·MAD) are dropped, grown by a few px, and the fit is repeated until the
 * background mask stops changing or the correction changes the map by less than a small fraction
 * of the noise. The first mask comes from a surface through robust block medians and whole-row
 * medians, so tall beads and scan-line jumps do not spoil the first fit. Rows with too little
 * background are aligned on their whole-row median. The input raster is not modified.
 *
 * @param raster - raw heights (nm), row-major
 * @param options - see {@link LevelHeightMapOptions}
 * @returns the levelled raster (background median 0 nm) and a report of every correction
 * @throws AnalysisError `non_finite_height` if a sample is NaN or infinite
 * @throws AnalysisError `insufficient_background` if too few pixels remain to fit the surface
 * @throws RangeError for a malformed raster or options
 * @see Legendre AM 1805 / Gauss CF 1809: least squares (normal equations), textbook
 * @see Hampel FR 1974, J Am Stat Assoc 69:383–393 (MAD as a robust scale)
 */
export function levelHeightMap(raster: Raster, options: LevelHeightMapOptions = {}): LevelHeightMapResult {
  const {
    surface = 'plane', alignRows = true, exclusionK = 3, exclusionDilationPx = 2, maxIterations = 8,
    convergenceFraction = 0.0005, convergenceSigmaFraction = 0.05, minBackgroundPerRow = 8,
  } = options;
  validateRaster(raster);
  if (!(exclusionK > 0)) throw new RangeError(`exclusionK must be > 0, got ${exclusionK}`);
  if (!Number.isInteger(maxIterations) || maxIterations < 1) throw new RangeError(`maxIterations must be an integer ≥ 1, got ${maxIterations}`);
  if (!Number.isInteger(exclusionDilationPx) || exclusionDilationPx < 0) throw new RangeError(`exclusionDilationPx must be an integer ≥ 0, got ${exclusionDilationPx}`);
  const { data, width, height } = raster;
  const n = width * height;
  const bad = firstNonFinite(data, n);
  if (bad >= 0) {
    const x = bad % width;
    const y = Math.floor(bad / width);
    throw new AnalysisError('non_finite_height', `Height at pixel (${x}, ${y}) is ${data[bad]}; fill or crop missing data before levelling.`, { x, y });
  }
  const basis = surface === 'poly2' ? BASIS_POLY2 : BASIS_PLANE;
  const frame = surfaceFrame(width, height, basis === BASIS_POLY2);
  const yc = frame[1];
  const sx = frame[2];
  const sy = frame[3];
  const trendDegree = basis === BASIS_POLY2 ? 2 : 1;
  const minBackground = Math.max(3 * basis.length, 16);

  const background = new Uint8Array(n).fill(1);
  let nbBackground = n;
  const rowOffsetsNm = new Float64Array(height);
  // becomes the levelled map: subtracting the final median in place spares a fresh frame
  const residual = new Float32Array(n);
  // one spare slot: the branch-free gathers write one element past the last sample
  const samples = new Float32Array(Math.min(n, ROBUST_MAX_SAMPLES) + 1);
  const sampleScratch = new Float32Array(samples.length);
  const rowMedianScratch = new Float32Array(2 * width);
  // raw row medians (before the trend is removed) and their surface: the guesses for the next pass
  const rowMediansNm = new Float64Array(height);
  let rowMediansSurface: Float64Array | null = null;
  let rowMediansSparse = false;
  const rowMedians = (c: Float64Array, mask: Uint8Array | null): void => {
    const halfWidthNm = (rowMediansSparse ? ROW_BRACKET_SIGMAS_AFTER_START : ROW_BRACKET_SIGMAS) * Math.max(sigma, MIN_SIGMA_NM);
    backgroundRowMedians(data, width, height, c, frame, mask, minBackgroundPerRow, rowMediansSurface, halfWidthNm, rowMedianScratch, rowMediansNm);
    rowMediansSurface = c;
    rowMediansSparse = mask === null;
    rowOffsetsNm.set(rowMediansNm);
    removeTrend(rowOffsetsNm, trendDegree, yc, sy);
  };
  let coefficients: Float64Array = new Float64Array(basis.length);
  let median = 0;
  let sigma = 0;
  let nbIterations = 0;
  let converged = false;
  /** residual = data − surface − row offsets; median and robust sigma of the background (the mask before it is updated). */
  const subtract = (c: Float64Array, sumShifts: boolean): number => {
    const stride = nbBackground > ROBUST_MAX_SAMPLES ? Math.ceil(nbBackground / ROBUST_MAX_SAMPLES) : 1;
    const pass = subtractSurfaceAndRows(data, width, height, c, frame, rowOffsetsNm, residual, background, stride, samples, sumShifts);
    ({ median, robustSigma: sigma } = robustSigma(samples.subarray(0, pass.nbSamples), undefined, sampleScratch));
    return pass.sumShift2;
  };

  // robust start: a surface through block medians gives a first mask that already excludes particles,
  // which saves one or two full-resolution passes compared with starting from every pixel
  const start = blockMedianSurface(data, width, height, basis, frame, exclusionK);
  if (start) {
    if (alignRows) {
      // whole-row medians: robust while particles cover less than half a row; without this a scan line
      // with a large jump would be excluded as a whole and never be aligned
      rowMedians(start, null);
    }
    subtract(start, false); // every pixel is background yet: the sample is every stride-th pixel
    nbBackground = updateBackgroundMask(residual, median + exclusionK * Math.max(sigma, MIN_SIGMA_NM), width, height, exclusionDilationPx, background).nbBackground;
    if (nbBackground < minBackground) {
      background.fill(1);
      nbBackground = n;
    }
  }

  for (let iter = 0; iter < maxIterations; iter++) {
    nbIterations = iter + 1;
    // fit the surface to data − row offsets on the background
    coefficients = fitSurface(data, width, height, background, rowOffsetsNm, basis, frame);
    if (alignRows) {
      // align scan lines on the background.
      // Row offsets and the surface's pure-y terms (1, y, y²) describe the same thing; keep those terms
      // in the surface so the split is unique and the alternation converges.
      rowMedians(coefficients, background);
    }
    // new residual, robust scale of the background, new exclusion mask
    const sumShift2 = subtract(coefficients, true);
    const cut = median + exclusionK * Math.max(sigma, MIN_SIGMA_NM);
    const update = updateBackgroundMask(residual, cut, width, height, exclusionDilationPx, background);
    nbBackground = update.nbBackground;
    if (nbBackground < minBackground) {
      throw new AnalysisError('insufficient_background', `Only ${nbBackground} background pixels remain after excluding particles; the map needs flat substrate around the particles (or a larger exclusionK).`, { nbBackground, exclusionK });
    }
    // converged: the mask is stable, or the correction moved the map (RMS) by less than a fraction of the
    // noise; a pixel toggling at the cut flips one row median back and forth, so the mask test alone can cycle
    const rmsShift = Math.sqrt(sumShift2 / n);
    if (update.nbChanges < convergenceFraction * n || (iter > 0 && rmsShift < convergenceSigmaFraction * Math.max(sigma, MIN_SIGMA_NM))) {
      converged = true;
      break;
    }
  }

  // final statistics on the final mask; put the background median at 0
  ({ median, robustSigma: sigma } = robustSigma(residual, background, samples, ROBUST_MAX_SAMPLES));
  subtractInPlace(residual, median);

  const c = (a: number, b: number): number => {
    const j = basis.findIndex(([p, q]) => p === a && q === b);
    return j < 0 ? 0 : coefficients[j];
  };
  const surfaceReport: BackgroundSurface = {
    offsetNm: c(0, 0) + median,
    slopeXNmPerPx: c(1, 0) / sx,
    slopeYNmPerPx: c(0, 1) / sy,
    curvXXNmPerPx2: c(2, 0) / (sx * sx),
    curvXYNmPerPx2: c(1, 1) / (sx * sy),
    curvYYNmPerPx2: c(0, 2) / (sy * sy),
  };
  return {
    levelled: { data: residual, width, height },
    surface: surfaceReport,
    rowOffsetsNm,
    backgroundSigmaNm: sigma,
    backgroundMask: background,
    diagnostics: { nbIterations, converged, nbBackgroundPx: nbBackground, backgroundFraction: nbBackground / n },
  };
}

/** Index of the first NaN or infinite value in data[0..n), or −1. Its own function: see fitSurface's rowSums. */
function firstNonFinite(data: Float32Array, n: number): number {
  for (let i = 0; i < n; i++) if (!Number.isFinite(data[i])) return i;
  return -1;
}

/** values −= value, rounded to Float32. */
function subtractInPlace(values: Float32Array, value: number): void {
  for (let i = 0; i < values.length; i++) values[i] -= value;
}
