import KDBush from 'kdbush';
import { Matrix, inverse } from 'ml-matrix';
import type { Point, Raster } from '../types';
import { gaussianPixelFraction } from '../fluorescence/gaussianPixelFraction';
import { solveNnls } from './solveNnls';

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
   * The fitting window extends this many sigmas beyond the outermost vesicle of a neighbourhood.
   * @default 3
   */
  windowMarginSigma?: number;
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
   * The same amplitude from ordinary least squares without the non-negativity constraint (counts, may be < 0). On
   * empty places it scatters symmetrically around 0, so mean + k·SD of it is a threshold in the unit of
   * amplitudeCounts that is not biased by clipping at 0. NaN out of frame or when the neighbourhood is singular.
   */
  readonly unconstrainedAmplitudeCounts: number;
  /** Standard error of amplitudeCounts from the unconstrained least-squares covariance (counts). */
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
 * either sign. Standard errors come from σ̂²·(AᵀA)⁻¹ of the unconstrained model with σ̂² = RSS/(m − p); they assume
 * equal pixel variances (background-dominated noise).
 *
 * @param raster - fluorescence frame (counts; the offset may remain, the background column absorbs it); not modified
 * @param positionsPx - vesicle centres mapped into this frame (px); not modified
 * @param options - see {@link EstimateMarkerAmplitudesOptions}
 * @returns per-vesicle amplitude, standard error and SNR
 * @throws RangeError when sigmaPx is not positive
 * @see Lawson CL, Hanson RJ. Solving Least Squares Problems. Prentice-Hall, 1974 (NNLS).
 */
export function estimateMarkerAmplitudes(
  raster: Raster,
  positionsPx: readonly Point[],
  options: EstimateMarkerAmplitudesOptions,
): EstimateMarkerAmplitudesResult {
  const { sigmaPx, neighbourDistanceSigma = 3, windowMarginSigma = 3 } = options;
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
  if (n > 0) {
    const index = new KDBush(n);
    for (const p of positionsPx) index.add(p.x, p.y);
    index.finish();
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
    const k = members.length;

    // design matrix: PSF columns, then +1 and −1 background columns
    const a = new Matrix(m, k + 2);
    const b = new Float64Array(m);
    let row = 0;
    for (let y = y0; y <= y1; y++) {
      for (let x = x0; x <= x1; x++) {
        for (let c = 0; c < k; c++) {
          const p = positionsPx[members[c]];
          a.set(row, c, gaussianPixelFraction(x - p.x, y - p.y, sigmaPx));
        }
        a.set(row, k, 1);
        a.set(row, k + 1, -1);
        b[row] = data[y * width + x];
        row++;
      }
    }
    // solve
    const { x: solution, residualNorm } = solveNnls(a, b);
    const background = solution[k] - solution[k + 1];
    groupBackgroundCounts.push(background);

    // uncertainty from the unconstrained model (PSF columns + one background column)
    const design = a.subMatrixColumn([...Array(k + 1).keys()]);
    const dof = Math.max(1, m - (k + 1));
    const sigma2 = (residualNorm * residualNorm) / dof;
    let covariance: Matrix | undefined;
    let unconstrained: Matrix | undefined;
    try {
      const designT = design.transpose();
      const normalInverse = inverse(designT.mmul(design));
      unconstrained = normalInverse.mmul(designT.mmul(Matrix.columnVector(Array.from(b))));
      covariance = normalInverse.mul(sigma2);
    } catch {
      covariance = undefined;
    }
    members.forEach((i, c) => {
      const amplitude = solution[c];
      const se = covariance ? Math.sqrt(Math.max(0, covariance.get(c, c))) : Number.NaN;
      amplitudes[i] = {
        amplitudeCounts: amplitude,
        unconstrainedAmplitudeCounts: unconstrained ? unconstrained.get(c, 0) : Number.NaN,
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
