import { Matrix, solve } from 'ml-matrix';
import { choleskySolve } from './choleskySolve';

/** Result of {@link solveNnlsNormal}. */
export interface SolveNnlsNormalResult {
  /** Solution x ≥ 0. */
  readonly x: Float64Array;
  /** Outer iterations used. */
  readonly iterations: number;
}

/**
 * Non-negative least squares from the normal equations: minimise ‖A·x − b‖₂ subject to x ≥ 0 given only G = AᵀA and
 * h = Aᵀb, by the same Lawson–Hanson active-set steps as {@link solveNnls}. Each step solves an n × n system instead
 * of an m × n QR, which makes the joint photometry of crowded windows (hundreds of pixels, tens of columns) tens of
 * times faster; the price is the squared condition number, harmless for PSF columns at least a few nm apart.
 *
 * @param g - AᵀA, n × n, symmetric positive semi-definite: a Matrix or row-major values (not modified)
 * @param h - Aᵀb, length n (not modified)
 * @param relativeTolerance - dual tolerance relative to max |h| (dimensionless)
 * @param startFrom - a nearby solution (say, of the same columns with other weights): its positive entries are tried as
 *   the first passive set. When the least-squares solution on that set is positive it is a feasible point of the
 *   algorithm and the iterations go on from there (a warm start, as in Bro R, de Jong S. J Chemometrics 11:393–401,
 *   1997); otherwise the solve starts from x = 0. Either way the result is the same optimum.
 * @returns the solution and the iterations used
 * @throws RangeError when h's length differs from G's size
 * @see Lawson CL, Hanson RJ. Solving Least Squares Problems. Prentice-Hall, 1974, chapter 23 (algorithm NNLS).
 */
export function solveNnlsNormal(
  g: Matrix | Float64Array,
  h: ArrayLike<number>,
  relativeTolerance = 1e-10,
  startFrom?: ArrayLike<number>,
): SolveNnlsNormalResult {
  const n = h.length;
  const rows = g instanceof Matrix ? g.rows : Math.sqrt(g.length);
  const columns = g instanceof Matrix ? g.columns : rows;
  if (rows !== n || columns !== n) throw new RangeError(`G must be ${n} × ${n} like h, got ${rows} × ${columns}`);
  const gv = g instanceof Matrix ? Float64Array.from(g.to1DArray()) : g;
  const x = new Float64Array(n);
  const passive = new Uint8Array(n);
  const cols = new Int32Array(n);
  const z = new Float64Array(n);
  const sub = new Float64Array(n * n);
  const rhs = new Float64Array(n);
  let scale = 0;
  for (let j = 0; j < n; j++) scale = Math.max(scale, Math.abs(h[j]));
  const tol = relativeTolerance * Math.max(scale, 1e-300) * n;
  const solvePassive = (): Float64Array => {
    z.fill(0);
    let p = 0;
    for (let j = 0; j < n; j++) if (passive[j]) cols[p++] = j;
    if (p === 0) return z;
    for (let i = 0; i < p; i++) {
      rhs[i] = h[cols[i]];
      for (let j = 0; j < p; j++) sub[i * p + j] = gv[cols[i] * n + cols[j]];
    }
    // Cholesky first (the passive block of AᵀA is positive definite unless two columns coincide); SVD (least-norm)
    // when it is singular
    const sol = choleskySolve(sub, p, rhs.subarray(0, p));
    if (sol && sol.every(Number.isFinite)) {
      for (let k = 0; k < p; k++) z[cols[k]] = sol[k];
      return z;
    }
    const svd = solve(Matrix.from1DArray(p, p, Array.from(sub.subarray(0, p * p))), Matrix.columnVector(Array.from(rhs.subarray(0, p))), true);
    for (let k = 0; k < p; k++) z[cols[k]] = svd.get(k, 0);
    return z;
  };

  if (startFrom) {
    for (let j = 0; j < n; j++) passive[j] = startFrom[j] > 0 ? 1 : 0;
    const start = solvePassive();
    let feasible = true;
    for (let j = 0; j < n; j++) if (passive[j] && !(start[j] > 0)) feasible = false;
    if (feasible) x.set(start);
    else passive.fill(0);
  }

  let iterations = 0;
  const maxIterations = 3 * n;
  for (; iterations < maxIterations; iterations++) {
    // dual w = h − G·x: the variable whose gradient most wants to grow joins the passive set
    let best = -1;
    let bestW = tol;
    for (let j = 0; j < n; j++) {
      if (passive[j]) continue;
      let w = h[j];
      for (let k = 0; k < n; k++) w -= gv[j * n + k] * x[k];
      if (w > bestW) {
        bestW = w;
        best = j;
      }
    }
    if (best < 0) break;
    passive[best] = 1;
    // inner loop: step back towards feasibility while the passive solution has non-positive entries
    for (let inner = 0; inner < 3 * n; inner++) {
      solvePassive();
      let alpha = Infinity;
      for (let j = 0; j < n; j++) if (passive[j] && z[j] <= 0) alpha = Math.min(alpha, x[j] / (x[j] - z[j]));
      if (alpha === Infinity) {
        x.set(z);
        break;
      }
      for (let j = 0; j < n; j++) {
        x[j] += alpha * (z[j] - x[j]);
        if (passive[j] && x[j] <= 1e-14 * Math.max(1, Math.abs(z[j]))) {
          passive[j] = 0;
          x[j] = 0;
        }
      }
    }
  }
  return { x, iterations };
}
