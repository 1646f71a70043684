/**
 * Where a background surface lives: it is a polynomial in u = (x − xc)/sx and v = (y − yc)/sy, centred on the map
 * so that the normal equations stay well conditioned. Stored in a Float64Array, [xc, yc, sx, sy, poly2 (1 or 0),
 * then u of every column], rather than an object: the levelling passes are optimised against the hidden class of
 * whatever object they are given, and a short-lived object's hidden class is dropped by the next full collection,
 * which threw that optimised code away on every call. A typed array's is permanent.
 */
export type SurfaceFrame = Float64Array;

/** Index of u of column 0 in a {@link SurfaceFrame}: u of column x is frame[FRAME_U + x]. */
export const FRAME_U = 5;

/** Exponents (a, b) of the basis u^a·v^b, in the order of the reported coefficients. */
export const BASIS_PLANE: readonly (readonly [number, number])[] = [[0, 0], [1, 0], [0, 1]];
export const BASIS_POLY2: readonly (readonly [number, number])[] = [[0, 0], [1, 0], [0, 1], [2, 0], [1, 1], [0, 2]];

/**
 * The {@link SurfaceFrame} of a width × height map: centre ((w−1)/2, (h−1)/2), scales max(centre, 1).
 *
 * @param poly2 - second-order surface (6 coefficients) rather than a plane (3)
 */
export function surfaceFrame(width: number, height: number, poly2: boolean): SurfaceFrame {
  const xc = (width - 1) / 2;
  const yc = (height - 1) / 2;
  const sx = Math.max(xc, 1);
  const frame = new Float64Array(FRAME_U + width);
  frame[0] = xc;
  frame[1] = yc;
  frame[2] = sx;
  frame[3] = Math.max(yc, 1);
  frame[4] = poly2 ? 1 : 0;
  for (let x = 0; x < width; x++) frame[FRAME_U + x] = (x - xc) / sx;
  return frame;
}

/**
 * The surface along row y as A + B·u + C·u², written to out[0..3): the v-terms are folded into A and B once per
 * row, so each pixel costs two multiply-adds. Every pass that evaluates the surface goes through here, so they
 * all compute bit-identical heights.
 *
 * @param c - surface coefficients in the order of {@link BASIS_PLANE} or {@link BASIS_POLY2}
 * @param frame - see {@link SurfaceFrame}
 * @param y - row (px)
 * @param out - receives A, B, C (nm)
 */
export function surfaceRow(c: Float64Array, frame: SurfaceFrame, y: number, out: Float64Array): void {
  const v = (y - frame[1]) / frame[3];
  const poly2 = frame[4] === 1;
  out[0] = c[0] + c[2] * v + (poly2 ? c[5] * v * v : 0);
  out[1] = c[1] + (poly2 ? c[4] * v : 0);
  out[2] = poly2 ? c[3] : 0;
}
