import type { Affine, Point } from '../types';

/** One fiducial placed on both images: `afm` in AFM pixels, `fl` in fluorescence pixels. */
export interface FiducialPair {
  readonly afm: Point;
  readonly fl: Point;
}

/**
 * Rotation + uniform scale (+ optional mirror) + translation. Not an affine model: it has 4 free
 * parameters (5 with the mirror flag). Maps p to `k·R(θ)·F·p + t`, where F = diag(1, −1) when
 * `mirrored` (the input's y axis is flipped first) and the identity otherwise.
 */
export interface Similarity {
  /** Output pixels per input pixel (k > 0). */
  readonly scalePxPerPx: number;
  /** θ in degrees; positive turns clockwise on screen because image y points down. */
  readonly rotationDeg: number;
  /** True when the map reverses handedness (det < 0), e.g. an inverted microscope. */
  readonly mirrored: boolean;
  /** Translation along x (output pixels). */
  readonly translationXPx: number;
  /** Translation along y (output pixels). */
  readonly translationYPx: number;
}

/** Transform model for point-pair registration. */
export type RegistrationModel = 'affine' | 'similarity';

export type { Affine, Point };
