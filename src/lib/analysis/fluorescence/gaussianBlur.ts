import type { Raster } from '../types';
import { blurRows } from './blurRows';
import type { FilterImplementation } from './types';
import { gaussianBlurWasm } from './wasm/gaussianKernel';

/** Options of {@link gaussianBlur}. */
export interface GaussianBlurOptions {
  /**
   * Kernel to run; the two agree to float32 rounding (see the tests), the WebAssembly one is several times faster.
   * @default 'auto'
   */
  implementation?: FilterImplementation;
}

/**
 * Gaussian blur of a float image: separable, edges replicated, kernel cut at 3σ. The same kernel
 * {@link laplacianOfGaussian} runs before its Laplacian, exported on its own so it can be timed and checked
 * against other implementations. Hand-written because image-js blurs 8/16-bit integer images only; by default a
 * WebAssembly SIMD kernel (assembly/gaussian.ts) runs it, with {@link blurRows} as the fallback.
 *
 * @param raster - input image (any unit); not modified
 * @param sigmaPx - Gaussian SD (px), > 0
 * @param options - see {@link GaussianBlurOptions}
 * @returns a new raster in the unit of the input
 * @throws RangeError when sigmaPx is not a finite positive number
 * @throws Error when `implementation: 'wasm'` is asked for and the WebAssembly kernel cannot run
 */
export function gaussianBlur(raster: Raster, sigmaPx: number, options: GaussianBlurOptions = {}): Raster {
  const { implementation = 'auto' } = options;
  if (implementation !== 'js') {
    const fast = gaussianBlurWasm(raster, sigmaPx);
    if (fast) return fast;
    if (implementation === 'wasm') throw new Error('The WebAssembly SIMD blur cannot run here (engine or memory)');
  }
  const { width, height } = raster;
  const out = new Float32Array(width * height);
  blurRows(raster, sigmaPx, (y, row) => out.set(row, y * width));
  return { data: out, width, height };
}
