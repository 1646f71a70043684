/**
 * Shared value types of the analysis core. Images are row-major: index = y * width + x,
 * x = column, y = row, and (0, 0) is the centre of the top-left pixel.
 */

/** A single-channel image of float samples (nm for height maps, counts for fluorescence). */
export interface Raster {
  readonly data: Float32Array;
  readonly width: number;
  readonly height: number;
}

/** A point in pixels of a named image. */
export interface Point {
  readonly x: number;
  readonly y: number;
}

/**
 * A 2x3 affine map [a, b, c, d, e, f]: x' = a·x + b·y + c, y' = d·x + e·y + f.
 * Name variables after the direction, e.g. `flFromAfm` maps AFM pixels to fluorescence pixels.
 */
export type Affine = readonly [number, number, number, number, number, number];
