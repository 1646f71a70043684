import type { Raster } from '../types';
import { blurRows } from './blurRows';

/**
 * Gaussian blur of a float image: separable, edges replicated, kernel cut at 3σ. The same kernel
 * {@link laplacianOfGaussian} runs before its Laplacian, exported on its own so it can be timed and checked
 * against other implementations. Hand-written because image-js blurs 8/16-bit integer images only.
 *
 * @param raster - input image (any unit); not modified
 * @param sigmaPx - Gaussian SD (px), > 0
 * @returns a new raster in the unit of the input
 * @throws RangeError when sigmaPx is not a finite positive number
 */
export function gaussianBlur(raster: Raster, sigmaPx: number): Raster {
  const { width, height } = raster;
  const out = new Float32Array(width * height);
  blurRows(raster, sigmaPx, (y, row) => out.set(row, y * width));
  return { data: out, width, height };
}
