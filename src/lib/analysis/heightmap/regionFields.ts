/**
 * Statistics of regions (watershed basins or whole connected components), 8 integers per region in one
 * Int32Array: region r's field F is at [r·REGION_FIELDS + F]. One typed array rather than objects, so that the
 * optimised loops that fill and read it never depend on a short-lived hidden class (see surfaceRow's SurfaceFrame).
 */
export const REGION_FIELDS = 8;
/** Pixels in the region. */
export const AREA = 0;
/** Inclusive bounding box (px). */
export const X_MIN = 1;
export const Y_MIN = 2;
export const X_MAX = 3;
export const Y_MAX = 4;
/** 1 when a pixel lies on the image border. */
export const EDGE = 5;
/** Raster index of the highest pixel (the first in flooding order among equals). */
export const PEAK = 6;
/** Raster index of the first pixel in flooding order: the key that orders regions. */
export const FIRST = 7;

/**
 * A table of n empty regions: area 0, an empty box (x from width down to −1, y from height down to −1).
 *
 * @param n - regions
 * @param width - columns of the image (px)
 * @param height - rows of the image (px)
 */
export function emptyRegions(n: number, width: number, height: number): Int32Array {
  const regions = new Int32Array(n * REGION_FIELDS);
  for (let r = 0; r < n; r++) {
    const at = r * REGION_FIELDS;
    regions[at + X_MIN] = width;
    regions[at + Y_MIN] = height;
    regions[at + X_MAX] = -1;
    regions[at + Y_MAX] = -1;
  }
  return regions;
}
