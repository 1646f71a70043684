import { medianInPlace } from './medianInPlace';
import { robustSigma } from './robustSigma';
import { solveLinearSystem } from './solveLinearSystem';
import type { SurfaceFrame } from './surfaceRow';

/** Floor of the robust sigma so a noise-free map still separates particles from a flat background (nm). */
const MIN_SIGMA_NM = 1e-6;

/**
 * Surface coefficients fitted to the medians of square blocks (about 16 per side), dropping blocks whose
 * median lies above median + k·sigma of the block residuals (particles, beads) over a few rounds. A robust
 * start for {@link levelHeightMap}: its first exclusion mask then already leaves out the particles.
 *
 * @param data - heights (nm), row-major
 * @param basis - exponents of the basis terms
 * @param frame - see {@link SurfaceFrame}
 * @param k - exclusion factor (robust sigmas above the median)
 * @returns the coefficients in the order of `basis`, or null when the map is too small for enough blocks or the
 *   blocks do not determine the surface (e.g. a strip with a single row of blocks)
 * @see Hampel FR 1974, J Am Stat Assoc 69:383–393 (MAD as a robust scale)
 */
export function blockMedianSurface(
  data: Float32Array, width: number, height: number, basis: readonly (readonly [number, number])[],
  frame: SurfaceFrame, k: number,
): Float64Array | null {
  const xc = frame[0];
  const yc = frame[1];
  const sx = frame[2];
  const sy = frame[3];
  const block = Math.max(8, Math.ceil(Math.min(width, height) / 16));
  const nbX = Math.floor(width / block);
  const nbY = Math.floor(height / block);
  const nbBlocks = nbX * nbY;
  const p = basis.length;
  if (nbBlocks < 4 * p) return null;
  const u = new Float64Array(nbBlocks);
  const v = new Float64Array(nbBlocks);
  const z = new Float64Array(nbBlocks);
  const half = (block + 1) >> 1;
  const scratch = new Float32Array(half * half);
  for (let by = 0; by < nbY; by++) {
    for (let bx = 0; bx < nbX; bx++) {
      const b = by * nbX + bx;
      z[b] = blockMedian(data, width, bx * block, by * block, block, scratch);
      u[b] = ((bx + 0.5) * block - 0.5 - xc) / sx;
      v[b] = ((by + 0.5) * block - 0.5 - yc) / sy;
    }
  }
  const keep = new Uint8Array(nbBlocks).fill(1);
  const res = new Float32Array(nbBlocks);
  let c: Float64Array | null = null;
  for (let round = 0; round < 5; round++) {
    const normal = new Float64Array(p * p);
    const rhs = new Float64Array(p);
    let count = 0;
    for (let b = 0; b < nbBlocks; b++) {
      if (!keep[b]) continue;
      count++;
      for (let i = 0; i < p; i++) {
        const fi = u[b] ** basis[i][0] * v[b] ** basis[i][1];
        rhs[i] += fi * z[b];
        for (let j = 0; j < p; j++) normal[i * p + j] += fi * u[b] ** basis[j][0] * v[b] ** basis[j][1];
      }
    }
    if (count < 2 * p) return c;
    const sol = solveLinearSystem(normal, rhs);
    // one row (or column) of blocks cannot fix the surface's y (x) terms: no robust start then
    if (!sol || !sol.every(Number.isFinite)) return c;
    c = sol;
    for (let b = 0; b < nbBlocks; b++) {
      let f = 0;
      for (let i = 0; i < p; i++) f += c[i] * u[b] ** basis[i][0] * v[b] ** basis[i][1];
      res[b] = z[b] - f;
    }
    const stats = robustSigma(res, keep);
    const cut = stats.median + k * Math.max(stats.robustSigma, MIN_SIGMA_NM);
    let changed = false;
    for (let b = 0; b < nbBlocks; b++) {
      const kb = res[b] > cut ? 0 : 1;
      if (kb !== keep[b]) changed = true;
      keep[b] = kb;
    }
    if (!changed) break;
  }
  return c;
}

/**
 * Median of a quarter of a block's pixels (every other row and column: plenty for a starting surface).
 * Its own function, so that V8 optimises this loop on its own (see fitSurface's rowSums).
 */
function blockMedian(data: Float32Array, width: number, x0: number, y0: number, block: number, scratch: Float32Array): number {
  let m = 0;
  for (let y = y0; y < y0 + block; y += 2) {
    const row = y * width;
    for (let x = x0; x < x0 + block; x += 2) scratch[m++] = data[row + x];
  }
  return medianInPlace(scratch, m);
}

