import { Matrix, QrDecomposition } from 'ml-matrix';

/** Options of {@link solveNnls}. */
export interface SolveNnlsOptions {
  /**
   * Maximum outer iterations (each adds one variable to the passive set).
   * @default 3·columns
   */
  maxIterations?: number;
  /**
   * Tolerance on the dual (gradient) for optimality, relative to the largest |Aᵀb| entry.
   * @default 1e-10
   */
  relativeTolerance?: number;
}

/** Result of {@link solveNnls}. */
export interface SolveNnlsResult {
  /** Solution x ≥ 0 (unit of b over unit of A). */
  readonly x: Float64Array;
  /** ‖A·x − b‖₂. */
  readonly residualNorm: number;
  /** Outer iterations used. */
  readonly iterations: number;
  /** Indices of the strictly positive (passive) variables. */
  readonly passiveSet: number[];
}

/**
 * Non-negative least squares: minimise ‖A·x − b‖₂ subject to x ≥ 0, by the Lawson–Hanson active-set method.
 * The unconstrained sub-problems are solved by QR decomposition (ml-matrix).
 *
 * @param a - design matrix, m × n (not modified)
 * @param b - right-hand side, length m (not modified)
 * @param options - see {@link SolveNnlsOptions}
 * @returns the solution, residual norm and passive set
 * @throws RangeError when b's length differs from A's row count
 * @see Lawson CL, Hanson RJ. Solving Least Squares Problems. Prentice-Hall, 1974, chapter 23 (algorithm NNLS).
 */
export function solveNnls(a: Matrix, b: ArrayLike<number>, options: SolveNnlsOptions = {}): SolveNnlsResult {
  const m = a.rows;
  const n = a.columns;
  const { maxIterations = 3 * n, relativeTolerance = 1e-10 } = options;
  if (b.length !== m) throw new RangeError(`b must have ${m} entries like A's rows, got ${b.length}`);
  const bVec = Matrix.columnVector(Array.from(b));
  const x = new Float64Array(n);
  const passive = new Array<boolean>(n).fill(false);
  const at = a.transpose();
  const atb = at.mmul(bVec);
  let scale = 0;
  for (let j = 0; j < n; j++) scale = Math.max(scale, Math.abs(atb.get(j, 0)));
  const tol = relativeTolerance * Math.max(scale, 1e-300) * Math.max(m, n);

  const gradient = () => {
    const r = bVec.clone().sub(a.mmul(Matrix.columnVector(Array.from(x))));
    return at.mmul(r);
  };
  const solvePassive = (): Float64Array => {
    const cols = passive.flatMap((p, j) => (p ? [j] : []));
    const z = new Float64Array(n);
    if (cols.length === 0) return z;
    const sub = a.subMatrixColumn(cols);
    const sol = new QrDecomposition(sub).solve(bVec);
    cols.forEach((j, k) => (z[j] = sol.get(k, 0)));
    return z;
  };

  let iterations = 0;
  for (; iterations < maxIterations; iterations++) {
    // choose the active variable whose gradient most wants to grow
    const w = gradient();
    let best = -1;
    let bestW = tol;
    for (let j = 0; j < n; j++) {
      if (!passive[j] && w.get(j, 0) > bestW) {
        bestW = w.get(j, 0);
        best = j;
      }
    }
    if (best < 0) break;
    passive[best] = true;

    // inner loop: step back towards feasibility while the passive solution has non-positive entries
    for (let inner = 0; inner < 3 * n; inner++) {
      const z = solvePassive();
      let alpha = Infinity;
      for (let j = 0; j < n; j++) {
        if (passive[j] && z[j] <= 0) alpha = Math.min(alpha, x[j] / (x[j] - z[j]));
      }
      if (alpha === Infinity) {
        x.set(z);
        break;
      }
      for (let j = 0; j < n; j++) {
        x[j] += alpha * (z[j] - x[j]);
        if (passive[j] && x[j] <= 1e-14 * Math.max(1, Math.abs(z[j]))) {
          passive[j] = false;
          x[j] = 0;
        }
      }
    }
  }

  const residual = bVec.clone().sub(a.mmul(Matrix.columnVector(Array.from(x))));
  return {
    x,
    residualNorm: residual.norm(),
    iterations,
    passiveSet: passive.flatMap((p, j) => (p ? [j] : [])),
  };
}
