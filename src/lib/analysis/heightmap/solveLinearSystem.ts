/**
 * Solve the square system A·x = b by LU decomposition with partial pivoting (Doolittle, column by column, as in
 * JAMA and ml-matrix's `solve`, operation for operation, so the results are bit-identical to ml-matrix's).
 * For the small normal equations of the levelling (3 × 3 to 6 × 6). Plain arrays rather than ml-matrix objects:
 * a full collection drops the hidden classes of those objects when none survives, which threw away the optimised
 * code of every function that solved a system on every levelling call.
 *
 * @param a - row-major p × p matrix (not modified)
 * @param b - right-hand side, length p (not modified)
 * @returns x, or null when the matrix is singular (a zero pivot)
 * @see Golub GH, Van Loan CF 1996, Matrix Computations, 3rd ed., §3.4 (Gaussian elimination with partial pivoting)
 */
export function solveLinearSystem(a: Float64Array, b: Float64Array): Float64Array | null {
  const p = b.length;
  if (a.length !== p * p) throw new RangeError(`matrix has ${a.length} entries, expected ${p}² = ${p * p}`);
  const lu = Float64Array.from(a);
  const pivot = Int32Array.from({ length: p }, (_, i) => i);
  const col = new Float64Array(p);
  for (let j = 0; j < p; j++) {
    for (let i = 0; i < p; i++) col[i] = lu[i * p + j];
    for (let i = 0; i < p; i++) {
      const kmax = Math.min(i, j);
      let s = 0;
      for (let k = 0; k < kmax; k++) s += lu[i * p + k] * col[k];
      col[i] -= s;
      lu[i * p + j] = col[i];
    }
    let q = j;
    for (let i = j + 1; i < p; i++) if (Math.abs(col[i]) > Math.abs(col[q])) q = i;
    if (q !== j) {
      for (let k = 0; k < p; k++) {
        const t = lu[q * p + k];
        lu[q * p + k] = lu[j * p + k];
        lu[j * p + k] = t;
      }
      const t = pivot[q];
      pivot[q] = pivot[j];
      pivot[j] = t;
    }
    if (lu[j * p + j] !== 0) for (let i = j + 1; i < p; i++) lu[i * p + j] /= lu[j * p + j];
  }
  for (let j = 0; j < p; j++) if (lu[j * p + j] === 0) return null;
  const x = Float64Array.from({ length: p }, (_, i) => b[pivot[i]]);
  for (let k = 0; k < p; k++) for (let i = k + 1; i < p; i++) x[i] -= x[k] * lu[i * p + k];
  for (let k = p - 1; k >= 0; k--) {
    x[k] /= lu[k * p + k];
    for (let i = 0; i < k; i++) x[i] -= x[k] * lu[i * p + k];
  }
  return x;
}
