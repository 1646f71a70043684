import type { Raster } from '../types';

/**
 * Check that a raster is well formed: positive integer size and data of length width·height.
 *
 * @param raster - the raster to check
 * @param name - how to call it in the message
 * @throws TypeError when the data is not a Float32Array
 * @throws RangeError when the size is not a positive integer or does not match the data length
 */
export function validateRaster(raster: Raster, name = 'raster'): void {
  if (!(raster?.data instanceof Float32Array)) throw new TypeError(`${name}.data must be a Float32Array`);
  const { width, height } = raster;
  if (!Number.isInteger(width) || !Number.isInteger(height) || width < 1 || height < 1) {
    throw new RangeError(`${name} size must be positive integers, got ${width}×${height}`);
  }
  if (raster.data.length !== width * height) {
    throw new RangeError(`${name}.data has ${raster.data.length} samples, expected width·height = ${width * height}`);
  }
}
