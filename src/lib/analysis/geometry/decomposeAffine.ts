import type { Affine } from '../types';

/** Result of {@link decomposeAffine}. */
export interface DecomposeAffineResult {
  /** Stretch along the input x axis (output px per input px, > 0). */
  readonly scaleXPxPerPx: number;
  /** Stretch along the input y axis after removing shear (output px per input px, > 0). */
  readonly scaleYPxPerPx: number;
  /** Rotation θ in degrees in (−180, 180]; positive is clockwise on screen (image y points down). */
  readonly rotationDeg: number;
  /** Angle (degrees) by which the mapped y axis leans away from perpendicular to the mapped x axis. */
  readonly shearDeg: number;
  /** True when det < 0: the map mirrors the image (modelled as a y flip applied first). */
  readonly mirrored: boolean;
  /** Determinant of the linear part (output px² per input px²). */
  readonly determinant: number;
  /** Translation along x (output pixels). */
  readonly translationXPx: number;
  /** Translation along y (output pixels). */
  readonly translationYPx: number;
}

/**
 * Splits the linear part as `R(θ)·[[sx, h], [0, sy]]·F`, where F = diag(1, −1) if det < 0 and the
 * identity otherwise (QR factorisation of the un-mirrored matrix). A mirror can be written as a flip
 * about any axis plus a rotation; this form always flips y first, so θ is the rotation after that flip.
 *
 * @param transform - 2×3 map with a non-zero determinant
 * @returns scales (px/px), rotation (deg), shear (deg), mirror flag and translation (px)
 */
export function decomposeAffine(transform: Affine): DecomposeAffineResult {
  const [a, b0, c, d, e0, f] = transform;
  const determinant = a * e0 - b0 * d;
  const mirrored = determinant < 0;
  // undo the y flip: A·diag(1, −1) negates the second column
  const b = mirrored ? -b0 : b0;
  const e = mirrored ? -e0 : e0;
  const scaleXPxPerPx = Math.hypot(a, d);
  const theta = Math.atan2(d, a);
  const cos = Math.cos(theta);
  const sin = Math.sin(theta);
  // Rᵀ·A' is upper triangular
  const h = cos * b + sin * e;
  const scaleYPxPerPx = -sin * b + cos * e;
  return {
    scaleXPxPerPx,
    scaleYPxPerPx,
    rotationDeg: (theta * 180) / Math.PI,
    shearDeg: (Math.atan2(h, scaleYPxPerPx) * 180) / Math.PI,
    mirrored,
    determinant,
    translationXPx: c,
    translationYPx: f,
  };
}
