import type { Raster } from '../types';

/** One feature placed in a synthetic height scene. */
export interface SceneFeatureSpec {
  /** Centre column (px of the scene). */
  readonly xPx: number;
  /** Centre row (px of the scene). */
  readonly yPx: number;
  /** Base (footprint) radius (nm). For a bead this is the sphere radius. */
  readonly baseRadiusNm: number;
  /** Apex height above the substrate (nm). For a bead this is the sphere diameter. */
  readonly heightNm: number;
}

/** A feature of the ground truth: where it is and what it is. */
export interface SceneTruth extends SceneFeatureSpec {
  readonly kind: 'vesicle' | 'bead';
}

/** Options of {@link makeHeightScene}. Lengths are nm unless named Px. */
export interface MakeHeightSceneOptions {
  /** Seed of the PRNG. @default 1 */
  seed?: number;
  /** Scene width (px). @default 256 */
  width?: number;
  /** Scene height (px). @default 256 */
  height?: number;
  /** Pixel size (nm/px). @default 5 */
  pixelSizeNm?: number;
  /** Vesicles at given places; when set, `nbVesicles` is ignored. @default undefined */
  vesicles?: readonly SceneFeatureSpec[];
  /** Number of randomly placed, non-overlapping vesicles. @default 20 */
  nbVesicles?: number;
  /** Range of random base radii (nm). @default [30, 60] */
  baseRadiusRangeNm?: readonly [number, number];
  /** Range of random heights (nm); EVs dried on mica are roughly 5–30 nm high (docs/references.md §9, from memory). @default [8, 30] */
  heightRangeNm?: readonly [number, number];
  /** Beads at given places (rigid spheres: heightNm = 2·baseRadiusNm is enforced from heightNm); when set, `nbBeads` is ignored. @default undefined */
  beads?: readonly { xPx: number; yPx: number; heightNm?: number }[];
  /** Number of randomly placed beads. @default 0 */
  nbBeads?: number;
  /** Bead diameter = imaged height (nm); above the detector's 300 nm fiducial cut-off. @default 400 */
  beadHeightNm?: number;
  /** Minimum free gap between random features (px). @default 4 */
  minGapPx?: number;
  /** Minimum distance from a random feature's footprint to the scene border (px). @default 3 */
  marginPx?: number;
  /** Substrate tilt along x (nm/px). @default 0.02 */
  tiltXNmPerPx?: number;
  /** Substrate tilt along y (nm/px). @default -0.015 */
  tiltYNmPerPx?: number;
  /** Constant substrate offset (nm). @default 5 */
  offsetNm?: number;
  /** Bow: curvature term c·((x−xc)² + (y−yc)²) (nm/px²). @default 0 */
  bowNmPerPx2?: number;
  /** SD of the per-row (scan-line) offsets (nm). @default 0.5 */
  lineOffsetSigmaNm?: number;
  /** SD of white Gaussian noise per pixel (nm). @default 0.15 */
  noiseSigmaNm?: number;
}

/** Output of {@link makeHeightScene}. */
export interface MakeHeightSceneResult {
  /** The raw height map (nm), with tilt, line offsets and noise. */
  readonly raster: Raster;
  /** The noise-free, level topography (nm) the raster was built from. */
  readonly topography: Raster;
  readonly pixelSizeNm: number;
  /** Ground truth, vesicles first then beads. */
  readonly truth: readonly SceneTruth[];
  /** The per-row offsets that were added (nm). */
  readonly lineOffsetsNm: Float64Array;
  readonly seed: number;
}
