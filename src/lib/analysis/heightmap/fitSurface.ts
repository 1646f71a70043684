import { AnalysisError } from '../errors';
import { solveLinearSystem } from './solveLinearSystem';
import { FRAME_U, type SurfaceFrame } from './surfaceRow';

/**
 * Least squares of z − rowOffset on u^a v^b over background pixels (see {@link SurfaceFrame}).
 * Accumulates per-row power sums of u, so the pass over the pixels costs a few flops each.
 *
 * @param data - heights (nm), row-major
 * @param background - 1 for the pixels to fit, else 0
 * @param rowOffsetsNm - offset subtracted from every pixel of each row (nm)
 * @param basis - exponents of the basis terms
 * @returns the coefficients, in the order of `basis`
 * @throws AnalysisError `insufficient_background` when the background does not constrain the surface
 * @see Legendre AM 1805 / Gauss CF 1809: least squares (normal equations), textbook
 */
export function fitSurface(
  data: Float32Array, width: number, height: number, background: Uint8Array, rowOffsetsNm: Float64Array,
  basis: readonly (readonly [number, number])[], frame: SurfaceFrame,
): Float64Array {
  // moments[a][b] = Σ u^a v^b (a + b ≤ 4); zMoments[a][b] = Σ z u^a v^b (a + b ≤ 2)
  const moments = Array.from({ length: 5 }, () => new Float64Array(5));
  const zMoments = Array.from({ length: 3 }, () => new Float64Array(3));
  const s = new Float64Array(8); // Σ u⁰..u⁴, then Σ z·u⁰..u² over one row
  const us = frame.subarray(FRAME_U);
  for (let y = 0; y < height; y++) {
    if (!rowSums(data, y * width, width, background, rowOffsetsNm[y], us, s)) continue;
    const v = (y - frame[1]) / frame[3];
    let vb = 1;
    for (let b = 0; b <= 4; b++) {
      for (let a = 0; a + b <= 4; a++) moments[a][b] += s[a] * vb;
      if (b <= 2) for (let a = 0; a + b <= 2; a++) zMoments[a][b] += s[5 + a] * vb;
      vb *= v;
    }
  }
  const p = basis.length;
  const normal = new Float64Array(p * p);
  const rhs = new Float64Array(p);
  for (let i = 0; i < p; i++) {
    const [ai, bi] = basis[i];
    rhs[i] = zMoments[ai][bi];
    for (let j = 0; j < p; j++) {
      const [aj, bj] = basis[j];
      normal[i * p + j] = moments[ai + aj][bi + bj];
    }
  }
  // a singular system (null) has the same cause as a non-finite solution
  const out = solveLinearSystem(normal, rhs) ?? new Float64Array(p).fill(Number.NaN);
  for (let i = 0; i < p; i++) {
    if (!Number.isFinite(out[i])) {
      throw new AnalysisError('insufficient_background', 'The background pixels do not constrain the surface (degenerate layout, e.g. a single row or column of pixels); use a larger map, or surface "plane" instead of "poly2".', { surface: p === 3 ? 'plane' : 'poly2' });
    }
  }
  return out;
}

/**
 * Power sums of u and z·u over the background pixels of one row, into s (Σu⁰..Σu⁴, Σz, Σzu, Σzu²).
 * A function per row rather than one loop over the frame: V8 then optimises it whole after a few rows, with
 * feedback for every line, instead of compiling the long loop on its own and discarding it when the code after
 * it runs for the first time. Returns false when the row has no background pixel.
 */
function rowSums(data: Float32Array, row: number, width: number, background: Uint8Array, off: number, us: Float64Array, s: Float64Array): boolean {
  // sums in locals: V8 keeps them in registers, typed-array elements would go through memory
  let s0 = 0, s1 = 0, s2 = 0, s3 = 0, s4 = 0, t0 = 0, t1 = 0, t2 = 0;
  for (let x = 0; x < width; x++) {
    if (!background[row + x]) continue;
    const u = us[x];
    const z = data[row + x] - off;
    const u2 = u * u;
    s0 += 1; s1 += u; s2 += u2; s3 += u2 * u; s4 += u2 * u2;
    t0 += z; t1 += z * u; t2 += z * u2;
  }
  s[0] = s0; s[1] = s1; s[2] = s2; s[3] = s3; s[4] = s4;
  s[5] = t0; s[6] = t1; s[7] = t2;
  return s0 !== 0;
}
