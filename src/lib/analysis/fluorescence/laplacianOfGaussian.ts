import type { Raster } from '../types';
import { gaussianFilter } from './gaussianFilter';

/** Options of {@link laplacianOfGaussian}. */
export interface LaplacianOfGaussianOptions {
  /**
   * Multiply by σ² so responses at different scales compare (γ = 1 normalisation).
   * @default true
   */
  scaleNormalised?: boolean;
}

/**
 * Negative Laplacian of Gaussian, −σ²·∇²(G_σ * I): bright blobs give positive peaks.
 *
 * The image is Gaussian-blurred separably and then the 5-point discrete Laplacian is applied, which costs
 * two 1-D passes instead of the four a fully separable LoG needs.
 *
 * @param raster - input image (counts); not modified
 * @param sigmaPx - scale σ (px)
 * @param options - see {@link LaplacianOfGaussianOptions}
 * @returns a new raster (counts, × px⁰ when scale-normalised)
 * @see Lindeberg T. Feature detection with automatic scale selection. IJCV 30(2):79–116, 1998.
 */
export function laplacianOfGaussian(
  raster: Raster,
  sigmaPx: number,
  options: LaplacianOfGaussianOptions = {},
): Raster {
  const { scaleNormalised = true } = options;
  const { width, height } = raster;
  const blurred = gaussianFilter(raster, sigmaPx).data;
  const factor = scaleNormalised ? -sigmaPx * sigmaPx : -1;
  const out = new Float32Array(width * height);
  for (let y = 0; y < height; y++) {
    const up = (y > 0 ? y - 1 : 0) * width;
    const down = (y < height - 1 ? y + 1 : height - 1) * width;
    const base = y * width;
    for (let x = 0; x < width; x++) {
      const c = blurred[base + x];
      const left = blurred[base + (x > 0 ? x - 1 : 0)];
      const right = blurred[base + (x < width - 1 ? x + 1 : width - 1)];
      out[base + x] = factor * (left + right + blurred[up + x] + blurred[down + x] - 4 * c);
    }
  }
  return { data: out, width, height };
}
