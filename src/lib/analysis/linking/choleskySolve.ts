/**
 * Solves A·X = B for a small symmetric positive-definite A by Cholesky factorisation (A = L·Lᵀ), on plain typed arrays.
 *
 * Why not ml-matrix: the joint photometry solves tens of thousands of 2 × 2 to 20 × 20 systems per field (NNLS steps and
 * standard errors), and at that size the cost of creating Matrix objects exceeded the arithmetic several times over.
 * ml-matrix stays the reference in the tests and the fallback (SVD) when A is singular.
 *
 * @param a - A, row-major n × n (only the lower triangle is read; not modified)
 * @param n - order of A
 * @param b - B, row-major n × nRhs (not modified)
 * @param nRhs - number of right-hand sides
 * @returns X, row-major n × nRhs, or null when A is not numerically positive definite (a pivot ≤ 1e-13 of its diagonal)
 * @see Golub GH, Van Loan CF. Matrix Computations, 4th ed., 2013, §4.2 (Cholesky factorisation).
 */
export function choleskySolve(a: ArrayLike<number>, n: number, b: ArrayLike<number>, nRhs = 1): Float64Array | null {
  const l = new Float64Array(n * n);
  for (let j = 0; j < n; j++) {
    let d = a[j * n + j];
    for (let k = 0; k < j; k++) d -= l[j * n + k] * l[j * n + k];
    if (!(d > 1e-13 * Math.abs(a[j * n + j]))) return null;
    const ljj = Math.sqrt(d);
    l[j * n + j] = ljj;
    for (let i = j + 1; i < n; i++) {
      let s = a[i * n + j];
      for (let k = 0; k < j; k++) s -= l[i * n + k] * l[j * n + k];
      l[i * n + j] = s / ljj;
    }
  }
  const x = Float64Array.from(b as ArrayLike<number>);
  for (let r = 0; r < nRhs; r++) {
    // L·y = b, then Lᵀ·x = y
    for (let i = 0; i < n; i++) {
      let s = x[i * nRhs + r];
      for (let k = 0; k < i; k++) s -= l[i * n + k] * x[k * nRhs + r];
      x[i * nRhs + r] = s / l[i * n + i];
    }
    for (let i = n - 1; i >= 0; i--) {
      let s = x[i * nRhs + r];
      for (let k = i + 1; k < n; k++) s -= l[k * n + i] * x[k * nRhs + r];
      x[i * nRhs + r] = s / l[i * n + i];
    }
  }
  return x;
}
