import type { Affine, Raster } from '../types';
import { applyAffine } from './applyAffine';

/**
 * Resamples an image onto another pixel grid: every output pixel (x, y) takes the bilinear value of
 * `source` at `sourceFromOut(x, y)`. Pixel coordinates follow the workspace convention, (0, 0) = centre
 * of the top-left pixel. Used to show the fluorescence frame in the AFM frame for a visual check.
 *
 * A point up to half a pixel outside the outermost pixel centres takes the edge value (the pixel still
 * covers it); farther out the output is NaN, so callers can mark "no data" instead of inventing values.
 *
 * @param source - image to sample (e.g. a fluorescence read-out, counts); NaN pixels stay NaN
 * @param sourceFromOut - map from output pixels to source pixels (e.g. `flFromAfm` composed with grid changes)
 * @param outWidth - output width (pixels, positive integer)
 * @param outHeight - output height (pixels, positive integer)
 * @returns outWidth × outHeight values, row-major, NaN outside the source frame
 * @throws RangeError on a non-integer or non-positive output size
 */
export function resampleThroughAffine(source: Raster, sourceFromOut: Affine, outWidth: number, outHeight: number): Float32Array {
  if (!(Number.isInteger(outWidth) && Number.isInteger(outHeight) && outWidth > 0 && outHeight > 0)) {
    throw new RangeError(`output size must be positive integers, got ${outWidth} × ${outHeight}`);
  }
  const { data, width: w, height: h } = source;
  const out = new Float32Array(outWidth * outHeight);
  for (let y = 0; y < outHeight; y++) {
    for (let x = 0; x < outWidth; x++) {
      const p = applyAffine(sourceFromOut, { x, y });
      if (!(p.x >= -0.5 && p.x < w - 0.5 && p.y >= -0.5 && p.y < h - 0.5)) {
        out[y * outWidth + x] = NaN;
        continue;
      }
      // within the border half-pixel the edge value repeats
      const sx = Math.min(Math.max(p.x, 0), w - 1);
      const sy = Math.min(Math.max(p.y, 0), h - 1);
      const x0 = Math.min(Math.floor(sx), Math.max(w - 2, 0));
      const y0 = Math.min(Math.floor(sy), Math.max(h - 2, 0));
      const x1 = Math.min(x0 + 1, w - 1);
      const y1 = Math.min(y0 + 1, h - 1);
      const fx = sx - x0;
      const fy = sy - y0;
      const top = data[y0 * w + x0] * (1 - fx) + data[y0 * w + x1] * fx;
      const bottom = data[y1 * w + x0] * (1 - fx) + data[y1 * w + x1] * fx;
      out[y * outWidth + x] = top * (1 - fy) + bottom * fy;
    }
  }
  return out;
}

/**
 * Map from full-resolution pixels to the pixels of a block-averaged copy (each copy pixel is the mean of
 * a `factor` × `factor` block, as the stored value read-outs are). The centre of block 0 sits at full
 * pixel (factor − 1) / 2.
 *
 * @param factor - block edge (full pixels per copy pixel, ≥ 1)
 * @returns the 2×3 map full → block-averaged pixels
 * @throws RangeError when factor is not a positive number
 */
export function downsampledFromFull(factor: number): Affine {
  if (!(factor > 0)) throw new RangeError(`factor must be positive, got ${factor}`);
  const shift = (1 - factor) / (2 * factor);
  return [1 / factor, 0, shift, 0, 1 / factor, shift];
}
