import type { Raster } from '../types';
import { blurRows } from './blurRows';
import type { FilterImplementation } from './types';
import { laplacianOfGaussianWasm } from './wasm/gaussianKernel';

/** Options of {@link laplacianOfGaussian}. */
export interface LaplacianOfGaussianOptions {
  /**
   * Multiply by σ² so responses at different scales compare (γ = 1 normalisation).
   * @default true
   */
  scaleNormalised?: boolean;
  /**
   * Kernel to run; the two agree to float32 rounding (see the tests), the WebAssembly one is several times faster.
   * @default 'auto'
   */
  implementation?: FilterImplementation;
}

/**
 * Negative Laplacian of Gaussian, −σ²·∇²(G_σ * I): bright blobs give positive peaks.
 *
 * The image is Gaussian-blurred by {@link blurRows} (separable, edges replicated) and the 5-point discrete Laplacian
 * is applied to each blurred row as soon as its lower neighbour is out, so no blurred frame is ever stored. This is
 * a hand-written kernel because image-js blurs 8/16-bit integer images only; streaming rows keeps the working set
 * in cache, which makes a 2048² frame several times faster than full-frame passes. By default a WebAssembly SIMD
 * kernel (assembly/gaussian.ts) runs the same computation in float32, fused the same way; this JavaScript code is
 * the fallback.
 *
 * @param raster - input image (counts); not modified
 * @param sigmaPx - scale σ (px), > 0
 * @param options - see {@link LaplacianOfGaussianOptions}
 * @returns a new raster (counts when scale-normalised, counts/px² otherwise)
 * @throws RangeError when sigmaPx is not a finite positive number
 * @throws Error when `implementation: 'wasm'` is asked for and the WebAssembly kernel cannot run
 * @see Lindeberg T. Feature detection with automatic scale selection. IJCV 30(2):79–116, 1998.
 */
export function laplacianOfGaussian(
  raster: Raster,
  sigmaPx: number,
  options: LaplacianOfGaussianOptions = {},
): Raster {
  const { scaleNormalised = true, implementation = 'auto' } = options;
  if (!Number.isFinite(sigmaPx) || sigmaPx <= 0) {
    throw new RangeError(`sigmaPx must be a finite positive number, got ${sigmaPx}`);
  }
  const factor = scaleNormalised ? -sigmaPx * sigmaPx : -1;
  if (implementation !== 'js') {
    const fast = laplacianOfGaussianWasm(raster, sigmaPx, factor);
    if (fast) return fast;
    if (implementation === 'wasm') throw new Error('The WebAssembly SIMD LoG cannot run here (engine or memory)');
  }
  const { width, height } = raster;
  const out = new Float32Array(width * height);
  const last = width - 1;

  // Laplacian of blurred row y from rows up, mid, down (edges replicated)
  const laplacianRow = (y: number, up: Float64Array, mid: Float64Array, down: Float64Array) => {
    const o = y * width;
    if (width === 1) {
      out[o] = factor * (up[0] + down[0] - 2 * mid[0]);
      return;
    }
    out[o] = factor * (mid[1] - mid[0] + up[0] + down[0] - 2 * mid[0]);
    for (let x = 1; x < last; x++) {
      out[o + x] = factor * (mid[x - 1] + mid[x + 1] + up[x] + down[x] - 4 * mid[x]);
    }
    out[o + last] = factor * (mid[last - 1] - mid[last] + up[last] + down[last] - 2 * mid[last]);
  };

  // blurRows keeps its last three rows valid, so row y − 1 is finished when row y arrives
  let prev2: Float64Array | undefined;
  let prev: Float64Array | undefined;
  blurRows(raster, sigmaPx, (y, row) => {
    if (y === 1 && prev) laplacianRow(0, prev, prev, row);
    else if (y >= 2 && prev && prev2) laplacianRow(y - 1, prev2, prev, row);
    prev2 = prev;
    prev = row;
  });
  if (prev) {
    if (height === 1) laplacianRow(0, prev, prev, prev);
    else if (prev2) laplacianRow(height - 1, prev2, prev, prev);
  }
  return { data: out, width, height };
}
