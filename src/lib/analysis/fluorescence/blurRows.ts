import type { Raster } from '../types';
import { gaussianHalfKernel } from './gaussianHalfKernel';

/** Tap pairs summed per pass over a row; wider kernels take several passes, narrower ones pad with zero weights. */
const PAIRS = 6;

/**
 * Gaussian blur streamed row by row: calls `emit(y, row)` for y = 0 … height−1 in order, with `row` the blurred
 * row y (float64). Separable, edges replicated, kernel {@link gaussianHalfKernel} (cut at 3σ, normalised to sum 1).
 *
 * Only 2·radius + 1 horizontally blurred rows are kept (a float32 ring), and each input row is blurred once, so the
 * working set stays in cache. Both passes add mirrored taps before multiplying and sum six tap pairs per pass over
 * a row ({@link addPairs}), which V8 compiles to one straight loop body with the weights in registers: 1.2–1.7×
 * faster than a loop over taps per pixel on 2048² frames (docs/benchmarks.md). Callers that need neighbouring rows
 * (a Laplacian) can rely on the last three emitted rows staying valid: `row` cycles through three buffers.
 *
 * @param raster - input image (any unit); not modified
 * @param sigmaPx - Gaussian SD (px), > 0
 * @param emit - receives each blurred row (same unit as the input)
 * @throws RangeError when sigmaPx is not a finite positive number
 */
export function blurRows(raster: Raster, sigmaPx: number, emit: (y: number, row: Float64Array) => void): void {
  const kernel = gaussianHalfKernel(sigmaPx);
  const { width, height, data } = raster;
  // half kernel: half[0] is the centre tap, half[j] the weight at ±j; zero from radius + 1 to reach
  const radius = kernel.length - 1;
  const nbChunks = Math.ceil(radius / PAIRS);
  const reach = nbChunks * PAIRS;
  const half = new Float64Array(reach + 1);
  half.set(kernel);
  const c = half[0];

  const ringRows = 2 * radius + 1;
  const ring = new Float32Array(ringRows * width);
  const padded = new Float32Array(width + 2 * reach);
  const acc = new Float64Array(width);
  const outRows = [new Float64Array(width), new Float64Array(width), new Float64Array(width)];
  const lo = new Int32Array(PAIRS);
  const hi = new Int32Array(PAIRS);
  const weights = new Float64Array(PAIRS);
  let lastBlurred = -1;
  for (let y = 0; y < height; y++) {
    // horizontal blur of the input rows row y needs, each once
    const need = Math.min(height - 1, y + radius);
    while (lastBlurred < need) {
      const k = ++lastBlurred;
      const src = k * width;
      padded.set(data.subarray(src, src + width), reach);
      padded.fill(data[src], 0, reach);
      padded.fill(data[src + width - 1], reach + width);
      for (let x = 0; x < width; x++) acc[x] = c * padded[x + reach];
      for (let chunk = 0; chunk < nbChunks; chunk++) {
        for (let i = 0; i < PAIRS; i++) {
          const j = chunk * PAIRS + i + 1;
          weights[i] = half[j];
          lo[i] = reach - j;
          hi[i] = reach + j;
        }
        addPairs(acc, padded, lo, hi, weights, width);
      }
      ring.set(acc, (k % ringRows) * width);
    }

    // vertical blur; taps beyond the radius have weight 0 and read the centre row
    const row = outRows[y % 3];
    const mid = (y % ringRows) * width;
    for (let x = 0; x < width; x++) row[x] = c * ring[mid + x];
    for (let chunk = 0; chunk < nbChunks; chunk++) {
      for (let i = 0; i < PAIRS; i++) {
        const j = chunk * PAIRS + i + 1;
        weights[i] = half[j];
        lo[i] = j > radius ? mid : (Math.max(0, y - j) % ringRows) * width;
        hi[i] = j > radius ? mid : (Math.min(height - 1, y + j) % ringRows) * width;
      }
      addPairs(row, ring, lo, hi, weights, width);
    }
    emit(y, row);
  }
}

/** out[x] += Σᵢ weights[i]·(src[lo[i] + x] + src[hi[i] + x]) for x < n, i < 6: the six pairs unrolled. */
function addPairs(
  out: Float64Array, src: Float32Array, lo: Int32Array, hi: Int32Array, weights: Float64Array, n: number,
): void {
  const [w1, w2, w3, w4, w5, w6] = weights;
  const [a1, a2, a3, a4, a5, a6] = lo;
  const [b1, b2, b3, b4, b5, b6] = hi;
  for (let x = 0; x < n; x++) {
    out[x] +=
      w1 * (src[a1 + x] + src[b1 + x]) + w2 * (src[a2 + x] + src[b2 + x]) + w3 * (src[a3 + x] + src[b3 + x]) +
      w4 * (src[a4 + x] + src[b4 + x]) + w5 * (src[a5 + x] + src[b5 + x]) + w6 * (src[a6 + x] + src[b6 + x]);
  }
}
