import KDBush from 'kdbush';
import { errorFunction } from 'simple-statistics';
import type { Point, Raster } from '../types';
import { choleskySolve } from './choleskySolve';
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
  /**
   * Only the first nbQueried positions' amplitudes are wanted; the others are sources of light only. Neighbourhoods
   * without a wanted position are not solved (their entries stay NaN, as out of frame, and they are not counted in
   * nbGroups); the wanted ones come out exactly as when every neighbourhood is solved.
   * @default every position
   */
  nbQueried?: number;
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
  const queried = Math.min(positionsPx.length, options.nbQueried ?? positionsPx.length);
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
  const pixelK = 1 / (Math.SQRT2 * sigmaPx);
  const scratch = scratchBuffers();
  for (const members of groups.values()) {
    if (queried < n && !members.some((i) => i < queried)) continue;
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
    const w = x1 - x0 + 1;
    const h = y1 - y0 + 1;
    const m = w * h;
    // other positions whose light reaches the window (within 3σ of it) get helper columns, fitted here and reported
    // in their own neighbourhood: otherwise a bright neighbour just outside the window raises the background column
    // and lowers the members' amplitudes
    const memberSet = new Set(members);
    const reach = 3 * sigmaPx;
    const helpers = index.range(x0 - reach, y0 - reach, x1 + reach, y1 + reach).filter((j) => j < n && inFrame[j] && !memberSet.has(j));
    const cols = [...members, ...helpers];
    const k = cols.length;

    // PSF columns: the pixel-integrated Gaussian is a product of a row and a column factor (gaussianPixelFraction),
    // so each column is kept as its w + h factors (row-major per column) instead of w·h values
    const fx = scratch.take('fx', w * k);
    const fy = scratch.take('fy', h * k);
    for (let c = 0; c < k; c++) {
      const p = positionsPx[cols[c]];
      for (let ix = 0; ix < w; ix++) fx[c * w + ix] = pixelFraction1d(x0 + ix - p.x, pixelK);
      for (let iy = 0; iy < h; iy++) fy[c * h + iy] = pixelFraction1d(y0 + iy - p.y, pixelK);
    }
    const b = scratch.take('b', m);
    for (let iy = 0, row = 0; iy < h; iy++) for (let ix = 0; ix < w; ix++) b[row++] = data[(y0 + iy) * width + x0 + ix];

    // normal equations on the PSF columns, then +1 and −1 background columns (NNLS keeps each ≥ 0, so their difference
    // may take either sign): unweighted first, from the separable factors; with a camera model, again with each pixel
    // weighted by 1/variance of its fitted mean
    let eq = separableNormalEquations(fx, fy, w, h, k, b);
    let solution = solveNnlsNormal(eq.g, eq.h).x;
    let anyLight = false;
    for (let c = 0; c < k; c++) if (solution[c] > 0) anyLight = true;
    if (camera && !anyLight) {
      // nothing but background: every pixel has the same variance, so the weighted problem is the unweighted one
      // times 1/variance, with the same solution (skipping the weighted pass is exact, not an approximation)
      const { offsetCounts, gainCountsPerPhoton: g, readNoiseCounts: r } = camera;
      const weight = 1 / Math.max(g * (solution[k] - solution[k + 1] - offsetCounts) + r * r, g + r * r);
      for (let i = 0; i < eq.g.length; i++) eq.g[i] *= weight;
      for (let i = 0; i < eq.h.length; i++) eq.h[i] *= weight;
      eq.bb *= weight;
    } else if (camera) {
      const a = scratch.take('a', m * k);
      for (let c = 0; c < k; c++) {
        let at = c * m;
        for (let iy = 0; iy < h; iy++) {
          const fyc = fy[c * h + iy];
          for (let ix = 0; ix < w; ix++) a[at++] = fx[c * w + ix] * fyc;
        }
      }
      const { offsetCounts, gainCountsPerPhoton: g, readNoiseCounts: r } = camera;
      const weights = scratch.take('weights', m).fill(solution[k] - solution[k + 1]);
      for (let c = 0; c < k; c++) {
        const x = solution[c];
        if (x === 0) continue;
        for (let i = 0, at = c * m; i < m; i++, at++) weights[i] += a[at] * x;
      }
      // at least one photon's variance, so a pixel at or below the offset never gets an infinite weight
      for (let i = 0; i < m; i++) weights[i] = 1 / Math.max(g * (weights[i] - offsetCounts) + r * r, g + r * r);
      eq = weightedNormalEquations(a, b, m, k, weights, scratch.take('wa', m));
      // the unweighted solution's passive set is nearly always the weighted one's too: start from it
      solution = solveNnlsNormal(eq.g, eq.h, undefined, solution).x;
    }
    const background = solution[k] - solution[k + 1];
    groupBackgroundCounts.push(background);

    // uncertainty from the unconstrained model (PSF columns + one background column); with a camera model the
    // pixels are already weighted, so (AᵀWA)⁻¹ is the covariance as it stands
    const n2 = k + 2;
    const dof = Math.max(1, m - (k + 1));
    // ‖A·x − b‖² = bᵀb − 2·xᵀh + xᵀG·x
    let rss = eq.bb;
    for (let r = 0; r < n2; r++) {
      rss -= 2 * solution[r] * eq.h[r];
      for (let c = 0; c < n2; c++) rss += solution[r] * eq.g[r * n2 + c] * solution[c];
    }
    const sigma2 = camera ? 1 : Math.max(0, rss) / dof;
    // conditional on the active constraints: the PSF columns NNLS set to 0 leave the model, so a labelled vesicle next
    // to an unlabelled one (clipped to 0) gets the SE of the model without that neighbour, not one inflated by two
    // nearly equal columns; each member is tested with the passive columns, itself and the background
    const shared = [...Array(k).keys()].filter((c) => solution[c] > 0);
    shared.push(k);
    const sharedFit = solveSubset(eq.g, eq.h, n2, shared);
    members.forEach((i, c) => {
      const amplitude = solution[c];
      const own = amplitude > 0 ? sharedOwn(sharedFit, shared.indexOf(c)) : borderedOwn(sharedFit, eq.g, eq.h, n2, shared, c);
      const se = own ? Math.sqrt(Math.max(0, sigma2 * own.variance)) : Number.NaN;
      amplitudes[i] = {
        amplitudeCounts: amplitude,
        unconstrainedAmplitudeCounts: own ? own.estimate : Number.NaN,
        stdErrCounts: se,
        snr: se > 0 ? amplitude / se : Number.NaN,
        groupIndex,
        outOfFrame: false,
      };
    });
    groupIndex++;
  }
  return { amplitudes, nbGroups: groupIndex, largestGroup, groupBackgroundCounts };
}

/** 1-D factor of gaussianPixelFraction: ½·[erf((d + ½)·k) − erf((d − ½)·k)] with k = 1/(√2·σ), the same expression. */
function pixelFraction1d(dPx: number, k: number): number {
  return 0.5 * (errorFunction((dPx + 0.5) * k) - errorFunction((dPx - 0.5) * k));
}

/**
 * G = AᵀA and h = Aᵀb (row-major, (k + 2)²) of k separable PSF columns, A_c(x, y) = fx_c(x)·fy_c(y), plus a +1 and
 * a −1 background column, and bᵀb: G_cd = (Σₓ fx_c·fx_d)·(Σ_y fy_c·fy_d), so the cost is k²·(w + h) + k·w·h.
 */
function separableNormalEquations(fx: Float64Array, fy: Float64Array, w: number, h: number, k: number, b: Float64Array) {
  const n2 = k + 2;
  const g = new Float64Array(n2 * n2);
  const rhs = new Float64Array(n2);
  let sumB = 0;
  let bb = 0;
  for (let i = 0, m = w * h; i < m; i++) {
    sumB += b[i];
    bb += b[i] * b[i];
  }
  for (let c = 0; c < k; c++) {
    for (let d = 0; d <= c; d++) {
      let sx = 0;
      let sy = 0;
      for (let ix = 0; ix < w; ix++) sx += fx[c * w + ix] * fx[d * w + ix];
      for (let iy = 0; iy < h; iy++) sy += fy[c * h + iy] * fy[d * h + iy];
      g[c * n2 + d] = sx * sy;
      g[d * n2 + c] = sx * sy;
    }
    let sx = 0;
    let sy = 0;
    for (let ix = 0; ix < w; ix++) sx += fx[c * w + ix];
    let hc = 0;
    for (let iy = 0; iy < h; iy++) {
      const fyc = fy[c * h + iy];
      sy += fyc;
      let row = 0;
      for (let ix = 0, at = iy * w; ix < w; ix++, at++) row += fx[c * w + ix] * b[at];
      hc += fyc * row;
    }
    rhs[c] = hc;
    setBackground(g, n2, k, c, sx * sy);
  }
  finishBackground(g, rhs, n2, k, w * h, sumB);
  return { g, h: rhs, bb };
}

/**
 * G = AᵀWA and h = AᵀWb (row-major, (k + 2)²) of the PSF columns `a` (column-major, m × k) plus a +1 and a −1
 * background column, and bᵀWb, W = diag(weights); `wa` is scratch of length m. Hand loops over typed arrays: the
 * dense ml-matrix products (with their transposed copies) took most of the linking time.
 */
function weightedNormalEquations(a: Float64Array, b: Float64Array, m: number, k: number, weights: Float64Array, wa: Float64Array) {
  const n2 = k + 2;
  const g = new Float64Array(n2 * n2);
  const h = new Float64Array(n2);
  let sumW = 0;
  let sumWb = 0;
  let bb = 0;
  for (let i = 0; i < m; i++) {
    sumW += weights[i];
    sumWb += weights[i] * b[i];
    bb += weights[i] * b[i] * b[i];
  }
  for (let c = 0; c < k; c++) {
    const ac = c * m;
    let hc = 0;
    let sc = 0;
    for (let i = 0; i < m; i++) {
      const v = weights[i] * a[ac + i];
      wa[i] = v;
      hc += v * b[i];
      sc += v;
    }
    for (let d = 0; d <= c; d++) {
      const ad = d * m;
      let s = 0;
      for (let i = 0; i < m; i++) s += wa[i] * a[ad + i];
      g[c * n2 + d] = s;
      g[d * n2 + c] = s;
    }
    h[c] = hc;
    setBackground(g, n2, k, c, sc);
  }
  finishBackground(g, h, n2, k, sumW, sumWb);
  return { g, h, bb };
}

/** The background columns' products with PSF column c: +s with the +1 column, −s with the −1 column. */
function setBackground(g: Float64Array, n2: number, k: number, c: number, s: number) {
  g[c * n2 + k] = s;
  g[k * n2 + c] = s;
  g[c * n2 + k + 1] = -s;
  g[(k + 1) * n2 + c] = -s;
}

/** The background block [[W, −W], [−W, W]] with W = Σ weights, and h = (+Σ w·b, −Σ w·b). */
function finishBackground(g: Float64Array, h: Float64Array, n2: number, k: number, sumW: number, sumWb: number) {
  g[k * n2 + k] = sumW;
  g[(k + 1) * n2 + k + 1] = sumW;
  g[k * n2 + k + 1] = -sumW;
  g[(k + 1) * n2 + k] = -sumW;
  h[k] = sumWb;
  h[k + 1] = -sumWb;
}

/** Grow-only work arrays for one call, so the tens of thousands of neighbourhoods do not each allocate their own. */
function scratchBuffers() {
  const buffers = new Map<string, Float64Array>();
  return {
    take(name: string, length: number): Float64Array {
      let buffer = buffers.get(name);
      if (!buffer || buffer.length < length) {
        buffer = new Float64Array(Math.max(length, 2 * (buffer?.length ?? 0)));
        buffers.set(name, buffer);
      }
      return buffer.subarray(0, length);
    },
  };
}

interface SubsetFit {
  /** (G_SS)⁻¹ over the subset S, row-major. */
  readonly inv: Float64Array;
  /** (G_SS)⁻¹·h_S. */
  readonly est: Float64Array;
}

/** Least squares over the columns `subset` of the normal equations (G row-major n2 × n2, h); undefined when singular. */
function solveSubset(g: Float64Array, h: Float64Array, n2: number, subset: readonly number[]): SubsetFit | undefined {
  const p = subset.length;
  const sub = new Float64Array(p * p);
  const identity = new Float64Array(p * p);
  for (let r = 0; r < p; r++) {
    identity[r * p + r] = 1;
    for (let c = 0; c < p; c++) sub[r * p + c] = g[subset[r] * n2 + subset[c]];
  }
  const inv = choleskySolve(sub, p, identity, p);
  if (!inv) return undefined;
  const est = new Float64Array(p);
  for (let r = 0; r < p; r++) {
    let s = 0;
    for (let c = 0; c < p; c++) s += inv[r * p + c] * h[subset[c]];
    est[r] = s;
  }
  return est.every(Number.isFinite) ? { inv, est } : undefined;
}

/** Estimate and variance factor of the subset's own column at position `at`. */
function sharedOwn(fit: SubsetFit | undefined, at: number) {
  return fit ? { estimate: fit.est[at], variance: fit.inv[at * fit.est.length + at] } : undefined;
}

/**
 * Estimate and variance factor of column c added to the subset S, from S's inverse by the bordered (Schur complement)
 * form instead of a new inverse: with u = G_S⁻¹·g_Sc and s = g_cc − g_Scᵀ·u, var factor = 1/s and
 * estimate = (h_c − uᵀ·h_S)/s. Undefined when c is (numerically) a combination of S's columns.
 * @see Golub GH, Van Loan CF. Matrix Computations, 4th ed., 2013, §3.2 (block elimination, Schur complement).
 */
function borderedOwn(fit: SubsetFit | undefined, g: Float64Array, h: Float64Array, n2: number, subset: readonly number[], c: number) {
  if (!fit) return undefined;
  const p = subset.length;
  let s = g[c * n2 + c];
  let num = h[c];
  for (let r = 0; r < p; r++) {
    let u = 0;
    for (let q = 0; q < p; q++) u += fit.inv[r * p + q] * g[subset[q] * n2 + c];
    s -= g[subset[r] * n2 + c] * u;
    num -= u * h[subset[r]];
  }
  if (!(s > 1e-12 * g[c * n2 + c])) return undefined;
  return { estimate: num / s, variance: 1 / s };
}
