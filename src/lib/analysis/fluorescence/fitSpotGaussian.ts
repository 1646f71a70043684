/** A rectangular window of a frame, copied out row-major, for {@link fitSpotGaussian}. */
export interface SpotWindow {
  /** Pixel values, row-major, `width × height` of them (counts). Only the first `width·height` are read. */
  readonly values: Float64Array;
  /** Column and row of the window's top-left pixel in the frame (px). */
  readonly x0: number;
  readonly y0: number;
  /** Window size (px). */
  readonly width: number;
  readonly height: number;
}

/** Starting point of {@link fitSpotGaussian}; positions in pixels of the frame. */
export interface SpotFitStart {
  readonly x: number;
  readonly y: number;
  /** Peak above background (counts). */
  readonly amplitude: number;
  /** Background level (counts). */
  readonly background: number;
  /** Starting Gaussian SD, usually the PSF sigma (px). */
  readonly sigmaPx: number;
}

/** Options of {@link fitSpotGaussian}. */
export interface FitSpotGaussianOptions {
  /**
   * The centre may move at most this far (+1 px of slack for the search) from the start in x and in y (px).
   * @default 1
   */
  maxShiftPx?: number;
  /**
   * Accepted steps at most; a rejected step also counts, so a stuck fit ends.
   * @default 10
   */
  maxIterations?: number;
  /**
   * Stop once a step moves the centre and the width by less than this (px) and the amplitude by less than this
   * fraction: 10⁻³ px is ~30× below the localisation precision of a bright spot.
   * @default 1e-3
   */
  stepTolerance?: number;
}

/** Result of {@link fitSpotGaussian}; positions in pixels of the frame. */
export interface FitSpotGaussianResult {
  readonly x: number;
  readonly y: number;
  readonly amplitude: number;
  readonly sigmaPx: number;
  readonly background: number;
  /** Steps tried. */
  readonly iterations: number;
  /** True when the last accepted step was below `stepTolerance`. */
  readonly converged: boolean;
  /** Sum of squared residuals at the answer (counts²). */
  readonly chiSquare: number;
}

const NB = 5;

/**
 * Least-squares fit of A·exp(−r²/2σ²) + B to one spot window by Levenberg–Marquardt (Marquardt's diagonal
 * scaling), written for the detection hot path: no allocation per pixel or per step, a 5×5 Cholesky solve, and a
 * relative stopping rule. Bounds: A ≥ 0, σ within [0.3, 3]× the start, centre within maxShiftPx + 1 of the start.
 *
 * @param window - the pixels to fit (counts); not modified
 * @param start - starting centre (px), amplitude and background (counts) and sigma (px)
 * @param options - see {@link FitSpotGaussianOptions}
 * @returns the fitted parameters, or undefined when the normal equations are singular from the start
 * @see Marquardt DW. An algorithm for least-squares estimation of nonlinear parameters. J SIAM 11(2):431–441, 1963.
 */
export function fitSpotGaussian(
  window: SpotWindow,
  start: SpotFitStart,
  options: FitSpotGaussianOptions = {},
): FitSpotGaussianResult | undefined {
  const { maxShiftPx = 1, maxIterations = 10, stepTolerance = 1e-3 } = options;
  const { values, x0, y0, width, height } = window;
  const lo = [0, start.x - maxShiftPx - 1, start.y - maxShiftPx - 1, 0.3 * start.sigmaPx, -Infinity];
  const hi = [Infinity, start.x + maxShiftPx + 1, start.y + maxShiftPx + 1, 3 * start.sigmaPx, Infinity];

  // normal equations: JᵀJ (upper triangle, row-major 5×5) and Jᵀr, for the current and the trial parameters
  let jtj = new Float64Array(NB * NB);
  let jtr = new Float64Array(NB);
  let trialJtj = new Float64Array(NB * NB);
  let trialJtr = new Float64Array(NB);
  const m = new Float64Array(NB * NB);
  const step = new Float64Array(NB);

  // the 15 products of JᵀJ and the 5 of Jᵀr are summed in locals: a loop over a gradient array per pixel kept
  // them in memory and cost about twice as much; the sums run in the same order, so the results are unchanged
  const evaluate = (p: Float64Array, a: Float64Array, b: Float64Array): number => {
    const amp = p[0];
    const mx = p[1];
    const my = p[2];
    const s = p[3];
    const bg = p[4];
    const inv2s2 = 1 / (2 * s * s);
    const invS2 = 1 / (s * s);
    let chi2 = 0;
    let a00 = 0, a01 = 0, a02 = 0, a03 = 0, a04 = 0, a11 = 0, a12 = 0, a13 = 0, a14 = 0;
    let a22 = 0, a23 = 0, a24 = 0, a33 = 0, a34 = 0, a44 = 0;
    let b0 = 0, b1 = 0, b2 = 0, b3 = 0, b4 = 0;
    for (let j = 0; j < height; j++) {
      const dy = y0 + j - my;
      const dy2 = dy * dy;
      const row = j * width;
      for (let i = 0; i < width; i++) {
        const dx = x0 + i - mx;
        const r2 = dx * dx + dy2;
        const e = Math.exp(-r2 * inv2s2);
        const ae = amp * e;
        const res = values[row + i] - ae - bg;
        chi2 += res * res;
        const g1 = ae * dx * invS2;
        const g2 = ae * dy * invS2;
        const g3 = ae * r2 * invS2 / s;
        b0 += e * res; b1 += g1 * res; b2 += g2 * res; b3 += g3 * res; b4 += res;
        a00 += e * e; a01 += e * g1; a02 += e * g2; a03 += e * g3; a04 += e;
        a11 += g1 * g1; a12 += g1 * g2; a13 += g1 * g3; a14 += g1;
        a22 += g2 * g2; a23 += g2 * g3; a24 += g2;
        a33 += g3 * g3; a34 += g3;
        a44 += 1;
      }
    }
    a[0] = a00; a[1] = a01; a[2] = a02; a[3] = a03; a[4] = a04;
    a[6] = a11; a[7] = a12; a[8] = a13; a[9] = a14;
    a[12] = a22; a[13] = a23; a[14] = a24;
    a[18] = a33; a[19] = a34;
    a[24] = a44;
    b[0] = b0; b[1] = b1; b[2] = b2; b[3] = b3; b[4] = b4;
    return chi2;
  };

  let p = Float64Array.of(Math.max(start.amplitude, 1e-3), start.x, start.y, start.sigmaPx, start.background);
  let trial = new Float64Array(NB);
  let chi2 = evaluate(p, jtj, jtr);
  let lambda = 1e-3;
  let iterations = 0;
  let converged = false;
  let solvedOnce = false;
  while (iterations < maxIterations) {
    iterations++;
    // damped system (JᵀJ + λ·diag JᵀJ)·δ = Jᵀr, solved by Cholesky on the upper triangle
    for (let u = 0; u < NB; u++) {
      for (let v = u; v < NB; v++) m[u * NB + v] = jtj[u * NB + v];
      m[u * NB + u] *= 1 + lambda;
    }
    if (!choleskySolve(m, jtr, step)) {
      lambda *= 10;
      if (lambda > 1e8) break;
      continue;
    }
    solvedOnce = true;
    for (let u = 0; u < NB; u++) trial[u] = Math.min(hi[u], Math.max(lo[u], p[u] + step[u]));
    const trialChi2 = evaluate(trial, trialJtj, trialJtr);
    if (trialChi2 < chi2) {
      const moved =
        Math.max(Math.abs(trial[1] - p[1]), Math.abs(trial[2] - p[2]), Math.abs(trial[3] - p[3])) < stepTolerance &&
        Math.abs(trial[0] - p[0]) <= stepTolerance * Math.abs(p[0]);
      [p, trial] = [trial, p];
      [jtj, trialJtj] = [trialJtj, jtj];
      [jtr, trialJtr] = [trialJtr, jtr];
      chi2 = trialChi2;
      lambda = Math.max(lambda / 10, 1e-9);
      if (moved) {
        converged = true;
        break;
      }
    } else {
      lambda *= 10;
      if (lambda > 1e8) {
        // no step lowers χ²: we sit at the minimum up to rounding
        converged = true;
        break;
      }
    }
  }
  if (!solvedOnce) return undefined;
  return { amplitude: p[0], x: p[1], y: p[2], sigmaPx: p[3], background: p[4], iterations, converged, chiSquare: chi2 };
}

/** Solves A·x = b for a symmetric positive-definite 5×5 A given by its upper triangle; A is overwritten. */
function choleskySolve(a: Float64Array, b: Float64Array, x: Float64Array): boolean {
  // A = Uᵀ·U, U stored in the upper triangle
  for (let i = 0; i < NB; i++) {
    for (let j = i; j < NB; j++) {
      let sum = a[i * NB + j];
      for (let k = 0; k < i; k++) sum -= a[k * NB + i] * a[k * NB + j];
      if (i === j) {
        if (!(sum > 0)) return false;
        a[i * NB + i] = Math.sqrt(sum);
      } else {
        a[i * NB + j] = sum / a[i * NB + i];
      }
    }
  }
  for (let i = 0; i < NB; i++) {
    let sum = b[i];
    for (let k = 0; k < i; k++) sum -= a[k * NB + i] * x[k];
    x[i] = sum / a[i * NB + i];
  }
  for (let i = NB - 1; i >= 0; i--) {
    let sum = x[i];
    for (let k = i + 1; k < NB; k++) sum -= a[i * NB + k] * x[k];
    x[i] = sum / a[i * NB + i];
  }
  return true;
}
