import { solve, Matrix } from 'ml-matrix';
import { AnalysisError } from '../errors';
import type { Raster } from '../types';
import { robustSigma } from './robustSigma';
import { selectKth } from './selectKth';
import type { BackgroundSurface, LevelHeightMapOptions, LevelHeightMapResult } from './types';
import { validateRaster } from './validateRaster';

/** Exponents (a, b) of the basis u^a·v^b, in the order of the reported coefficients. */
const BASIS_PLANE: readonly (readonly [number, number])[] = [[0, 0], [1, 0], [0, 1]];
const BASIS_POLY2: readonly (readonly [number, number])[] = [[0, 0], [1, 0], [0, 1], [2, 0], [1, 1], [0, 2]];
/** Samples used for the median/MAD of the background (regular subsample, see robustSigma). */
const ROBUST_MAX_SAMPLES = 1 << 17;
/** Floor of the robust sigma so a noise-free map still separates particles from a flat background (nm). */
const MIN_SIGMA_NM = 1e-6;

/**
 * Level an AFM height map: least-squares background surface (plane or second-order polynomial)
 * fitted on background pixels only, then scan-line alignment (each row shifted by the median of
 * its background pixels). Particles are excluded iteratively: residuals above
 * median + k·(1.4826·MAD) are dropped, grown by a few px, and the fit is repeated until the
 * background mask stops changing or the correction changes the map by less than a small fraction
 * of the noise. The first mask comes from a surface through robust block medians and whole-row
 * medians, so tall beads and scan-line jumps do not spoil the first fit. Rows with too little
 * background are aligned on their whole-row median. The input raster is not modified.
 *
 * @param raster - raw heights (nm), row-major
 * @param options - see {@link LevelHeightMapOptions}
 * @returns the levelled raster (background median 0 nm) and a report of every correction
 * @throws AnalysisError `non_finite_height` if a sample is NaN or infinite
 * @throws AnalysisError `insufficient_background` if too few pixels remain to fit the surface
 * @throws RangeError for a malformed raster or options
 * @see Legendre AM 1805 / Gauss CF 1809: least squares (normal equations), textbook
 * @see Hampel FR 1974, J Am Stat Assoc 69:383–393 (MAD as a robust scale)
 */
export function levelHeightMap(raster: Raster, options: LevelHeightMapOptions = {}): LevelHeightMapResult {
  const {
    surface = 'plane', alignRows = true, exclusionK = 3, exclusionDilationPx = 2, maxIterations = 8,
    convergenceFraction = 0.0005, convergenceSigmaFraction = 0.05, minBackgroundPerRow = 8,
  } = options;
  validateRaster(raster);
  if (!(exclusionK > 0)) throw new RangeError(`exclusionK must be > 0, got ${exclusionK}`);
  if (!Number.isInteger(maxIterations) || maxIterations < 1) throw new RangeError(`maxIterations must be an integer ≥ 1, got ${maxIterations}`);
  if (!Number.isInteger(exclusionDilationPx) || exclusionDilationPx < 0) throw new RangeError(`exclusionDilationPx must be an integer ≥ 0, got ${exclusionDilationPx}`);
  const { data, width, height } = raster;
  const n = width * height;
  for (let i = 0; i < n; i++) {
    if (!Number.isFinite(data[i])) {
      throw new AnalysisError('non_finite_height', `Height at pixel (${i % width}, ${Math.floor(i / width)}) is ${data[i]}; fill or crop missing data before levelling.`, { x: i % width, y: Math.floor(i / width) });
    }
  }
  const basis = surface === 'poly2' ? BASIS_POLY2 : BASIS_PLANE;
  const xc = (width - 1) / 2;
  const yc = (height - 1) / 2;
  const sx = Math.max(xc, 1);
  const sy = Math.max(yc, 1);

  const background = new Uint8Array(n).fill(1);
  const excluded = new Uint8Array(n);
  const rowOffsetsNm = new Float64Array(height);
  const residual = new Float32Array(n);
  const previous = new Float32Array(n);
  const scratch = new Float32Array(n);
  const dilationTmp = new Uint8Array(n);
  const colCount = new Int32Array(width);
  const rowValid = new Uint8Array(height).fill(1);
  const rowBuf = new Float32Array(width); // Float32 like every buffer given to selectKth: one element kind keeps it fast
  let coefficients: Float64Array = new Float64Array(basis.length);
  let median = 0;
  let sigma = 0;
  let nbIterations = 0;
  let converged = false;

  // robust start: a surface through block medians gives a first mask that already excludes particles,
  // which saves one or two full-resolution passes compared with starting from every pixel
  const start = blockMedianSurface(data, width, height, basis, xc, yc, sx, sy, exclusionK, scratch);
  if (start) {
    evaluateResidual(data, width, height, start, basis, xc, yc, sx, sy, residual);
    if (alignRows) {
      // whole-row medians: robust while particles cover less than half a row; without this a scan line
      // with a large jump would be excluded as a whole and never be aligned
      rowValid.fill(1);
      for (let y = 0; y < height; y++) {
        const row = y * width;
        // every other pixel: this is only the starting point, refined on the background below
        let m = 0;
        for (let x = y & 1; x < width; x += 2) rowBuf[m++] = residual[row + x];
        rowOffsetsNm[y] = medianInPlace(rowBuf, m);
      }
      removeTrend(rowOffsetsNm, rowValid, basis.length === 6 ? 2 : 1, yc, sy);
      for (let y = 0; y < height; y++) {
        const row = y * width;
        for (let x = 0; x < width; x++) residual[row + x] -= rowOffsetsNm[y];
      }
    }
    const first = robustSigma(residual, undefined, scratch, ROBUST_MAX_SAMPLES);
    dilateAbove(residual, first.median + exclusionK * Math.max(first.robustSigma, MIN_SIGMA_NM), width, height, exclusionDilationPx, excluded, dilationTmp, colCount);
    let nbStart = 0;
    for (let i = 0; i < n; i++) nbStart += background[i] = 1 - excluded[i];
    if (nbStart < Math.max(3 * basis.length, 16)) background.fill(1);
  }

  for (let iter = 0; iter < maxIterations; iter++) {
    nbIterations = iter + 1;
    // fit the surface to data − row offsets on the background
    previous.set(residual);
    coefficients = fitSurface(data, width, height, background, rowOffsetsNm, basis, xc, yc, sx, sy);
    evaluateResidual(data, width, height, coefficients, basis, xc, yc, sx, sy, residual);
    // align scan lines on the background
    if (alignRows) {
      for (let y = 0; y < height; y++) {
        let m = 0;
        const row = y * width;
        for (let x = 0; x < width; x++) if (background[row + x]) rowBuf[m++] = residual[row + x];
        if (m < minBackgroundPerRow) {
          // too little background in this row: fall back to the whole row
          for (let x = 0; x < width; x++) rowBuf[x] = residual[row + x];
          m = width;
        }
        rowValid[y] = 1;
        rowOffsetsNm[y] = medianInPlace(rowBuf, m);
      }
      // Row offsets and the surface's pure-y terms (1, y, y²) describe the same thing; keep those terms
      // in the surface so the split is unique and the alternation converges.
      removeTrend(rowOffsetsNm, rowValid, basis.length === 6 ? 2 : 1, yc, sy);
      for (let y = 0; y < height; y++) {
        const off = rowOffsetsNm[y];
        const row = y * width;
        for (let x = 0; x < width; x++) residual[row + x] -= off;
      }
    }
    // robust scale of the background, new exclusion mask
    ({ median, robustSigma: sigma } = robustSigma(residual, background, scratch, ROBUST_MAX_SAMPLES));
    const cut = median + exclusionK * Math.max(sigma, MIN_SIGMA_NM);
    dilateAbove(residual, cut, width, height, exclusionDilationPx, excluded, dilationTmp, colCount);
    let changes = 0;
    let nbBackground = 0;
    let sumShift2 = 0;
    for (let i = 0; i < n; i++) {
      const shift = residual[i] - previous[i];
      sumShift2 += shift * shift;
      const b = 1 - excluded[i];
      changes += b ^ background[i];
      background[i] = b;
      nbBackground += b;
    }
    if (nbBackground < Math.max(3 * basis.length, 16)) {
      throw new AnalysisError('insufficient_background', `Only ${nbBackground} background pixels remain after excluding particles; the map needs flat substrate around the particles (or a larger exclusionK).`, { nbBackground, exclusionK });
    }
    // converged: the mask is stable, or the correction moved the map (RMS) by less than a fraction of the
    // noise; a pixel toggling at the cut flips one row median back and forth, so the mask test alone can cycle
    const rmsShift = Math.sqrt(sumShift2 / n);
    if (changes < convergenceFraction * n || (iter > 0 && rmsShift < convergenceSigmaFraction * Math.max(sigma, MIN_SIGMA_NM))) {
      converged = true;
      break;
    }
  }

  // final statistics on the final mask; put the background median at 0
  ({ median, robustSigma: sigma } = robustSigma(residual, background, scratch, ROBUST_MAX_SAMPLES));
  const levelledData = new Float32Array(n);
  for (let i = 0; i < n; i++) levelledData[i] = residual[i] - median;
  let nbBackgroundPx = 0;
  for (let i = 0; i < n; i++) nbBackgroundPx += background[i];

  const c = (a: number, b: number): number => {
    const j = basis.findIndex(([p, q]) => p === a && q === b);
    return j < 0 ? 0 : coefficients[j];
  };
  const surfaceReport: BackgroundSurface = {
    offsetNm: c(0, 0) + median,
    slopeXNmPerPx: c(1, 0) / sx,
    slopeYNmPerPx: c(0, 1) / sy,
    curvXXNmPerPx2: c(2, 0) / (sx * sx),
    curvXYNmPerPx2: c(1, 1) / (sx * sy),
    curvYYNmPerPx2: c(0, 2) / (sy * sy),
  };
  return {
    levelled: { data: levelledData, width, height },
    surface: surfaceReport,
    rowOffsetsNm,
    backgroundSigmaNm: sigma,
    backgroundMask: background,
    diagnostics: { nbIterations, converged, nbBackgroundPx, backgroundFraction: nbBackgroundPx / n },
  };
}

/**
 * Least squares of z − rowOffset on u^a v^b over background pixels, u = (x − xc)/sx, v = (y − yc)/sy.
 * Accumulates per-row power sums of u so the pass over the pixels costs a few flops each.
 */
function fitSurface(
  data: Float32Array, width: number, height: number, background: Uint8Array, rowOffsetsNm: Float64Array,
  basis: readonly (readonly [number, number])[], xc: number, yc: number, sx: number, sy: number,
): Float64Array {
  // moments[a][b] = Σ u^a v^b (a + b ≤ 4); zMoments[a][b] = Σ z u^a v^b (a + b ≤ 2)
  const moments = Array.from({ length: 5 }, () => new Float64Array(5));
  const zMoments = Array.from({ length: 3 }, () => new Float64Array(3));
  const s = new Float64Array(5);
  const t = new Float64Array(3);
  const us = new Float64Array(width);
  for (let x = 0; x < width; x++) us[x] = (x - xc) / sx;
  for (let y = 0; y < height; y++) {
    s.fill(0);
    t.fill(0);
    const row = y * width;
    const off = rowOffsetsNm[y];
    for (let x = 0; x < width; x++) {
      if (!background[row + x]) continue;
      const u = us[x];
      const z = data[row + x] - off;
      const u2 = u * u;
      s[0] += 1; s[1] += u; s[2] += u2; s[3] += u2 * u; s[4] += u2 * u2;
      t[0] += z; t[1] += z * u; t[2] += z * u2;
    }
    if (s[0] === 0) continue;
    const v = (y - yc) / sy;
    let vb = 1;
    for (let b = 0; b <= 4; b++) {
      for (let a = 0; a + b <= 4; a++) moments[a][b] += s[a] * vb;
      if (b <= 2) for (let a = 0; a + b <= 2; a++) zMoments[a][b] += t[a] * vb;
      vb *= v;
    }
  }
  const p = basis.length;
  const normal = new Matrix(p, p);
  const rhs = new Matrix(p, 1);
  for (let i = 0; i < p; i++) {
    const [ai, bi] = basis[i];
    rhs.set(i, 0, zMoments[ai][bi]);
    for (let j = 0; j < p; j++) {
      const [aj, bj] = basis[j];
      normal.set(i, j, moments[ai + aj][bi + bj]);
    }
  }
  const solution = solve(normal, rhs);
  const out = new Float64Array(p);
  for (let i = 0; i < p; i++) {
    out[i] = solution.get(i, 0);
    if (!Number.isFinite(out[i])) {
      throw new AnalysisError('insufficient_background', 'The background pixels do not constrain the surface (degenerate layout); try surface "plane".', { surface: p === 3 ? 'plane' : 'poly2' });
    }
  }
  return out;
}

/**
 * Surface coefficients fitted to the medians of square blocks (about 16 per side), dropping blocks whose
 * median lies above median + k·sigma of the block residuals (particles, beads) over a few rounds.
 * Returns null when the map is too small for enough blocks.
 */
function blockMedianSurface(
  data: Float32Array, width: number, height: number, basis: readonly (readonly [number, number])[],
  xc: number, yc: number, sx: number, sy: number, k: number, scratch: Float32Array,
): Float64Array | null {
  const block = Math.max(8, Math.ceil(Math.min(width, height) / 16));
  const nbX = Math.floor(width / block);
  const nbY = Math.floor(height / block);
  const nbBlocks = nbX * nbY;
  const p = basis.length;
  if (nbBlocks < 4 * p) return null;
  const u = new Float64Array(nbBlocks);
  const v = new Float64Array(nbBlocks);
  const z = new Float64Array(nbBlocks);
  for (let by = 0; by < nbY; by++) {
    for (let bx = 0; bx < nbX; bx++) {
      let m = 0;
      // a quarter of the pixels (every other row and column) is plenty for a starting median
      for (let y = by * block; y < (by + 1) * block; y += 2) {
        const row = y * width;
        for (let x = bx * block; x < (bx + 1) * block; x += 2) scratch[m++] = data[row + x];
      }
      const b = by * nbX + bx;
      z[b] = medianInPlace(scratch, m);
      u[b] = ((bx + 0.5) * block - 0.5 - xc) / sx;
      v[b] = ((by + 0.5) * block - 0.5 - yc) / sy;
    }
  }
  const keep = new Uint8Array(nbBlocks).fill(1);
  const res = new Float32Array(nbBlocks);
  let c: Float64Array | null = null;
  for (let round = 0; round < 5; round++) {
    const normal = new Matrix(p, p);
    const rhs = new Matrix(p, 1);
    let count = 0;
    for (let b = 0; b < nbBlocks; b++) {
      if (!keep[b]) continue;
      count++;
      for (let i = 0; i < p; i++) {
        const fi = u[b] ** basis[i][0] * v[b] ** basis[i][1];
        rhs.set(i, 0, rhs.get(i, 0) + fi * z[b]);
        for (let j = 0; j < p; j++) normal.set(i, j, normal.get(i, j) + fi * u[b] ** basis[j][0] * v[b] ** basis[j][1]);
      }
    }
    if (count < 2 * p) return c;
    const sol = solve(normal, rhs).getColumn(0);
    if (!sol.every(Number.isFinite)) return c;
    c = Float64Array.from(sol);
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

/** residual = data − surface (row offsets not applied). */
function evaluateResidual(
  data: Float32Array, width: number, height: number, c: Float64Array,
  basis: readonly (readonly [number, number])[], xc: number, yc: number, sx: number, sy: number, out: Float32Array,
): void {
  const poly2 = basis.length === 6;
  const us = new Float64Array(width);
  for (let x = 0; x < width; x++) us[x] = (x - xc) / sx;
  for (let y = 0; y < height; y++) {
    const v = (y - yc) / sy;
    // z = A + B·u + C·u², with the v-terms folded into A and B
    const A = c[0] + c[2] * v + (poly2 ? c[5] * v * v : 0);
    const B = c[1] + (poly2 ? c[4] * v : 0);
    const C = poly2 ? c[3] : 0;
    const row = y * width;
    for (let x = 0; x < width; x++) {
      const u = us[x];
      out[row + x] = data[row + x] - (A + u * (B + C * u));
    }
  }
}

/** Subtract from `values` (rows flagged valid) their least-squares polynomial of the given degree in v = (y − yc)/sy. */
function removeTrend(values: Float64Array, valid: Uint8Array, degree: number, yc: number, sy: number): void {
  const p = degree + 1;
  const normal = new Matrix(p, p);
  const rhs = new Matrix(p, 1);
  let count = 0;
  for (let y = 0; y < values.length; y++) {
    if (!valid[y]) continue;
    count++;
    const v = (y - yc) / sy;
    for (let i = 0; i < p; i++) {
      rhs.set(i, 0, rhs.get(i, 0) + values[y] * v ** i);
      for (let j = 0; j < p; j++) normal.set(i, j, normal.get(i, j) + v ** (i + j));
    }
  }
  if (count <= p) return;
  const c = solve(normal, rhs).getColumn(0);
  for (let y = 0; y < values.length; y++) {
    if (!valid[y]) continue;
    const v = (y - yc) / sy;
    let t = 0;
    for (let i = 0; i < p; i++) t += c[i] * v ** i;
    values[y] -= t;
  }
}

/** Median of buf[0..m), reordering buf. */
function medianInPlace(buf: Float32Array, m: number): number {
  const half = m >> 1;
  const upper = selectKth(buf, m, half);
  if (m % 2 === 1) return upper;
  let lower = -Infinity;
  for (let i = 0; i < half; i++) if (buf[i] > lower) lower = buf[i];
  return (lower + upper) / 2;
}

/**
 * out = (values > cut) dilated by a (2r+1)² square. Separable, both passes in row order and without
 * data-dependent branches: a pixel is set when the count of flagged pixels in its window is non-zero,
 * and the counts slide along the row, then down the columns (one counter per column).
 * Own kernel rather than image-js morphology: it fuses the float threshold with the dilation and
 * reuses buffers, with no image object per levelling pass.
 */
function dilateAbove(
  values: Float32Array, cut: number, width: number, height: number, r: number,
  out: Uint8Array, tmp: Uint8Array, colCount: Int32Array,
): void {
  if (r === 0) {
    for (let i = 0; i < width * height; i++) out[i] = values[i] > cut ? 1 : 0;
    return;
  }
  // horizontal: flags[x + r + 1] = (values > cut) for pixel x, zero outside the row
  const flags = new Uint8Array(width + 2 * r + 1);
  for (let y = 0; y < height; y++) {
    const row = y * width;
    for (let x = 0; x < width; x++) flags[x + r + 1] = values[row + x] > cut ? 1 : 0;
    let count = 0;
    for (let k = 0; k <= 2 * r; k++) count += flags[k];
    for (let x = 0; x < width; x++) {
      count += flags[x + 2 * r + 1] - flags[x];
      tmp[row + x] = count > 0 ? 1 : 0;
    }
  }
  // vertical: colCount[x] = flagged rows within ±r of row y in column x; rows outside the map add zeros
  const zeros = new Uint8Array(width);
  colCount.fill(0);
  for (let y = 0; y < Math.min(r, height); y++) {
    const row = y * width;
    for (let x = 0; x < width; x++) colCount[x] += tmp[row + x];
  }
  for (let y = 0; y < height; y++) {
    const row = y * width;
    const enter = y + r < height ? tmp : zeros;
    const enterAt = y + r < height ? (y + r) * width : 0;
    const leave = y - r - 1 >= 0 ? tmp : zeros;
    const leaveAt = y - r - 1 >= 0 ? (y - r - 1) * width : 0;
    for (let x = 0; x < width; x++) {
      const c = colCount[x] + enter[enterAt + x] - leave[leaveAt + x];
      colCount[x] = c;
      out[row + x] = c > 0 ? 1 : 0;
    }
  }
}
