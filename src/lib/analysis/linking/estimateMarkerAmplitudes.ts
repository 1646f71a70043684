import KDBush from 'kdbush';
import { Matrix, inverse } from 'ml-matrix';
import type { Point, Raster } from '../types';
import { gaussianPixelFraction } from '../fluorescence/gaussianPixelFraction';
import { solveNnlsNormal } from './solveNnlsNormal';
import type { CameraModel } from './types';

/** Options of {@link estimateMarkerAmplitudes}. */
export interface EstimateMarkerAmplitudesOptions {
  /** PSF standard deviation of this channel (px). Required. */
  sigmaPx: number;
  /**
   * Vesicles closer than this many sigmas are solved together (one neighbourhood).
   * @default 3
   */
  neighbourDistanceSigma?: number;
  /**
   * The fitting window extends this many sigmas beyond the outermost vesicle of a neighbourhood; 4 rather than 3
   * pins the background better (amplitude SE 8 % lower for one PSF, see the error-model test).
   * @default 4
   */
  windowMarginSigma?: number;
  /**
   * Camera noise model. When given, each pixel's variance is gain·(fitted mean − offset) + read² (counts²), the
   * amplitudes come from weighted NNLS with those variances (weights from a first unweighted fit) and the standard
   * errors from (AᵀWA)⁻¹, the stated model; the residuals do not scale them. When absent, the SE is σ̂²·(AᵀA)⁻¹ with
   * σ̂² = RSS/(m − p) (equal pixel variances).
   * @default none
   */
  camera?: CameraModel;
}

/** Amplitude of one vesicle in one channel. */
export interface MarkerAmplitude {
  /**
   * Joint NNLS amplitude (≥ 0): the total counts this vesicle contributes, integrated over the whole plane. Each PSF
   * column sums to 1 over the plane (pixel-integrated Gaussian), so the amplitude is in counts, not counts per pixel.
   * NaN out of frame.
   */
  readonly amplitudeCounts: number;
  /**
   * The same amplitude from (weighted) least squares without its own non-negativity constraint, over the columns NNLS
   * kept plus this one and the background (counts, may be < 0). On empty places it scatters symmetrically around 0,
   * so its robust spread is not biased by clipping at 0. NaN out of frame or when the neighbourhood is singular.
   */
  readonly unconstrainedAmplitudeCounts: number;
  /**
   * Standard error of that amplitude (counts), from the (weighted) least-squares covariance over the same columns:
   * conditional on the neighbours NNLS set to 0, so an unlabelled neighbour closer than the PSF does not inflate it.
   */
  readonly stdErrCounts: number;
  /** amplitudeCounts / stdErrCounts. */
  readonly snr: number;
  /** Index of the neighbourhood solved together; −1 out of frame. */
  readonly groupIndex: number;
  /** True when the position lies outside the frame: nothing was estimated. */
  readonly outOfFrame: boolean;
}

/** Result of {@link estimateMarkerAmplitudes}. */
export interface EstimateMarkerAmplitudesResult {
  /** One entry per input position, same order. */
  readonly amplitudes: MarkerAmplitude[];
  /** Number of neighbourhoods solved and the largest one's size. */
  readonly nbGroups: number;
  readonly largestGroup: number;
  /** Local background level per pixel fitted in each neighbourhood (counts). */
  readonly groupBackgroundCounts: number[];
}

/**
 * Joint photometry of vesicles at known positions: each neighbourhood of nearby vesicles is fitted as a sum of
 * pixel-integrated Gaussian PSFs (one column per vesicle, amplitude = its total counts) plus a constant
 * background, with non-negative amplitudes, so light between two close vesicles goes to the one that emits it.
 *
 * The background is given two columns (+1 and −1) so that, under the non-negativity of NNLS, it may take
 * either sign. With a camera model (the pipeline always passes one) the fit is weighted by each pixel's variance
 * gain·(mean − offset) + read² and the standard error is √[(AᵀWA)⁻¹]ᵢᵢ; for one PSF on a known flat background of b
 * photons/px at gain 1 this is √(4πσ²b), the least-squares amplitude noise of docs/references.md §4. Without
 * one, standard errors come from σ̂²·(AᵀA)⁻¹ with σ̂² = RSS/(m − p) (equal pixel variances).
 *
 * @param raster - fluorescence frame (counts; the offset may remain, the background column absorbs it); not modified
 * @param positionsPx - vesicle centres mapped into this frame (px); not modified
 * @param options - see {@link EstimateMarkerAmplitudesOptions}
 * @returns per-vesicle amplitude, standard error and SNR
 * @throws RangeError when sigmaPx is not positive
 * @see Lawson CL, Hanson RJ. Solving Least Squares Problems. Prentice-Hall, 1974 (NNLS).
 * @see Mortensen KI et al. Nat Methods 7:377–381, 2010 (amplitude and background noise of Gaussian spot fits;
 *   docs/references.md §4).
 */
export function estimateMarkerAmplitudes(
  raster: Raster,
  positionsPx: readonly Point[],
  options: EstimateMarkerAmplitudesOptions,
): EstimateMarkerAmplitudesResult {
  const { sigmaPx, neighbourDistanceSigma = 3, windowMarginSigma = 4, camera } = options;
  if (!(sigmaPx > 0)) throw new RangeError(`sigmaPx must be positive, got ${sigmaPx}`);
  const { width, height, data } = raster;
  const n = positionsPx.length;
  const inFrame = positionsPx.map((p) => p.x >= -0.5 && p.x < width - 0.5 && p.y >= -0.5 && p.y < height - 0.5);

  // neighbourhoods: union-find over pairs closer than neighbourDistanceSigma·σ
  const parent = Int32Array.from({ length: n }, (_, i) => i);
  const find = (i: number): number => {
    while (parent[i] !== i) {
      parent[i] = parent[parent[i]];
      i = parent[i];
    }
    return i;
  };
  const index = new KDBush(Math.max(1, n));
  for (const p of positionsPx) index.add(p.x, p.y);
  if (n === 0) index.add(-1e9, -1e9);
  index.finish();
  if (n > 0) {
    const linkPx = neighbourDistanceSigma * sigmaPx;
    for (let i = 0; i < n; i++) {
      if (!inFrame[i]) continue;
      for (const j of index.within(positionsPx[i].x, positionsPx[i].y, linkPx)) {
        if (j !== i && inFrame[j]) parent[find(i)] = find(j);
      }
    }
  }
  const groups = new Map<number, number[]>();
  for (let i = 0; i < n; i++) {
    if (!inFrame[i]) continue;
    const root = find(i);
    const members = groups.get(root);
    if (members) members.push(i);
    else groups.set(root, [i]);
  }

  const amplitudes: MarkerAmplitude[] = positionsPx.map(() => ({
    amplitudeCounts: Number.NaN,
    unconstrainedAmplitudeCounts: Number.NaN,
    stdErrCounts: Number.NaN,
    snr: Number.NaN,
    groupIndex: -1,
    outOfFrame: true,
  }));
  const groupBackgroundCounts: number[] = [];
  let largestGroup = 0;
  let groupIndex = 0;
  const margin = windowMarginSigma * sigmaPx;
  for (const members of groups.values()) {
    largestGroup = Math.max(largestGroup, members.length);
    // window
    let xMin = Infinity;
    let xMax = -Infinity;
    let yMin = Infinity;
    let yMax = -Infinity;
    for (const i of members) {
      xMin = Math.min(xMin, positionsPx[i].x);
      xMax = Math.max(xMax, positionsPx[i].x);
      yMin = Math.min(yMin, positionsPx[i].y);
      yMax = Math.max(yMax, positionsPx[i].y);
    }
    const x0 = Math.max(0, Math.floor(xMin - margin));
    const x1 = Math.min(width - 1, Math.ceil(xMax + margin));
    const y0 = Math.max(0, Math.floor(yMin - margin));
    const y1 = Math.min(height - 1, Math.ceil(yMax + margin));
    const m = (x1 - x0 + 1) * (y1 - y0 + 1);
    // other positions whose light reaches the window (within 3σ of it) get helper columns, fitted here and reported
    // in their own neighbourhood: otherwise a bright neighbour just outside the window raises the background column
    // and lowers the members' amplitudes
    const memberSet = new Set(members);
    const reach = 3 * sigmaPx;
    const helpers = index.range(x0 - reach, y0 - reach, x1 + reach, y1 + reach).filter((j) => j < n && inFrame[j] && !memberSet.has(j));
    const cols = [...members, ...helpers];
    const k = cols.length;

    // design matrix: PSF columns, then +1 and −1 background columns
    const a = new Matrix(m, k + 2);
    const b = new Float64Array(m);
    let row = 0;
    for (let y = y0; y <= y1; y++) {
      for (let x = x0; x <= x1; x++) {
        for (let c = 0; c < k; c++) {
          const p = positionsPx[cols[c]];
          a.set(row, c, gaussianPixelFraction(x - p.x, y - p.y, sigmaPx));
        }
        a.set(row, k, 1);
        a.set(row, k + 1, -1);
        b[row] = data[y * width + x];
        row++;
      }
    }
    // solve on the normal equations (solveNnlsNormal): unweighted first; with a camera model, again with each
    // pixel weighted by 1/variance of its fitted mean
    const normal = () => {
      const at = a.transpose();
      const bVec = Matrix.columnVector(Array.from(b));
      let bb = 0;
      for (let i = 0; i < m; i++) bb += b[i] * b[i];
      return { g: at.mmul(a), h: at.mmul(bVec).getColumn(0), bb };
    };
    let eq = normal();
    let solution = solveNnlsNormal(eq.g, eq.h).x;
    if (camera) {
      const fitted = a.mmul(Matrix.columnVector(Array.from(solution)));
      const { offsetCounts, gainCountsPerPhoton: g, readNoiseCounts: r } = camera;
      for (let i = 0; i < m; i++) {
        // at least one photon's variance, so a pixel at or below the offset never gets an infinite weight
        const variance = Math.max(g * (fitted.get(i, 0) - offsetCounts) + r * r, g + r * r);
        const w = 1 / Math.sqrt(variance);
        for (let c = 0; c < k + 2; c++) a.set(i, c, a.get(i, c) * w);
        b[i] *= w;
      }
      eq = normal();
      solution = solveNnlsNormal(eq.g, eq.h).x;
    }
    const background = solution[k] - solution[k + 1];
    groupBackgroundCounts.push(background);

    // uncertainty from the unconstrained model (PSF columns + one background column); with a camera model the
    // rows are already whitened, so (AᵀWA)⁻¹ is the covariance as it stands
    const dof = Math.max(1, m - (k + 1));
    // ‖A·x − b‖² = bᵀb − 2·xᵀh + xᵀG·x
    let rss = eq.bb;
    for (let r = 0; r < k + 2; r++) {
      rss -= 2 * solution[r] * eq.h[r];
      for (let c = 0; c < k + 2; c++) rss += solution[r] * eq.g.get(r, c) * solution[c];
    }
    const sigma2 = camera ? 1 : Math.max(0, rss) / dof;
    // conditional on the active constraints: the PSF columns NNLS set to 0 leave the model, so a labelled vesicle next
    // to an unlabelled one (clipped to 0) gets the SE of the model without that neighbour, not one inflated by two
    // nearly equal columns; each member is tested with the passive columns, itself and the background
    const passiveCols = [...Array(k).keys()].filter((c) => solution[c] > 0);
    const fitOver = (cols: number[]) => {
      try {
        const inv = inverse(eq.g.selection(cols, cols));
        const est = inv.mmul(Matrix.columnVector(cols.map((c) => eq.h[c])));
        return { inv, est };
      } catch {
        return undefined;
      }
    };
    const shared = fitOver([...passiveCols, k]);
    members.forEach((i, c) => {
      const amplitude = solution[c];
      const cols = solution[c] > 0 ? [...passiveCols, k] : [...passiveCols, c, k];
      const fit = solution[c] > 0 ? shared : fitOver(cols);
      const at = cols.indexOf(c);
      const se = fit ? Math.sqrt(Math.max(0, sigma2 * fit.inv.get(at, at))) : Number.NaN;
      amplitudes[i] = {
        amplitudeCounts: amplitude,
        unconstrainedAmplitudeCounts: fit ? fit.est.get(at, 0) : Number.NaN,
        stdErrCounts: se,
        snr: se > 0 ? amplitude / se : Number.NaN,
        groupIndex,
        outOfFrame: false,
      };
    });
    groupIndex++;
  }
  return { amplitudes, nbGroups: groups.size, largestGroup, groupBackgroundCounts };
}
