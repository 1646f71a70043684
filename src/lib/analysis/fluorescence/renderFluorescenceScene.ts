import type { Raster } from '../types';
import type { SceneRng, SceneSpot } from './types';
import { gaussianPixelFraction } from './gaussianPixelFraction';
import { samplePoisson } from './samplePoisson';

/** Options of {@link renderFluorescenceScene}. */
export interface RenderFluorescenceSceneOptions {
  /** Frame size (px). */
  widthPx: number;
  heightPx: number;
  /** Gaussian PSF standard deviation (px). */
  sigmaPx: number;
  /** Emitters to draw; each spreads its photons over pixels by the pixel-integrated Gaussian. */
  spots: readonly SceneSpot[];
  /** Seeded random source, e.g. `createRng(seed)`. Required so scenes are reproducible. */
  rng: SceneRng;
  /**
   * Mean background photons per pixel at the frame centre (photons).
   * @default 100
   */
  backgroundPhotonsPerPx?: number;
  /**
   * Linear background slope: photons per pixel added per pixel of x and of y, measured from the frame centre.
   * @default { x: 0, y: 0 }
   */
  backgroundSlopePerPx?: { readonly x: number; readonly y: number };
  /**
   * Camera bias added to every pixel (counts).
   * @default 100
   */
  cameraOffsetCounts?: number;
  /**
   * Camera gain (counts per photon).
   * @default 1
   */
  gainCountsPerPhoton?: number;
  /**
   * Gaussian read noise SD (counts).
   * @default 0
   */
  readNoiseCounts?: number;
  /**
   * Round to integers and clip to [0, 65535] like a 16-bit camera.
   * @default true
   */
  quantise16Bit?: boolean;
}

/** Result of {@link renderFluorescenceScene}. */
export interface RenderFluorescenceSceneResult {
  /** The noisy frame (counts). */
  readonly raster: Raster;
  /** The noise-free expected photons per pixel (photons), for checks. */
  readonly expectedPhotons: Raster;
  /** Number of pixels that hit the 16-bit ceiling. */
  readonly nbSaturated: number;
}

/**
 * Renders a synthetic single-channel fluorescence frame: Gaussian spots with known photon totals on a (sloped)
 * photon background, Poisson shot noise, camera gain, read noise and offset.
 *
 * @param options - see {@link RenderFluorescenceSceneOptions}
 * @returns noisy frame, expected photon image and saturation count
 * @throws RangeError for a non-positive size or sigma
 */
export function renderFluorescenceScene(options: RenderFluorescenceSceneOptions): RenderFluorescenceSceneResult {
  const {
    widthPx,
    heightPx,
    sigmaPx,
    spots,
    rng,
    backgroundPhotonsPerPx = 100,
    backgroundSlopePerPx = { x: 0, y: 0 },
    cameraOffsetCounts = 100,
    gainCountsPerPhoton = 1,
    readNoiseCounts = 0,
    quantise16Bit = true,
  } = options;
  if (!(Number.isInteger(widthPx) && widthPx > 0 && Number.isInteger(heightPx) && heightPx > 0)) {
    throw new RangeError(`widthPx and heightPx must be positive integers, got ${widthPx}×${heightPx}`);
  }
  if (!(sigmaPx > 0)) throw new RangeError(`sigmaPx must be positive, got ${sigmaPx}`);

  // expected photons
  const expected = new Float32Array(widthPx * heightPx);
  const cx = (widthPx - 1) / 2;
  const cy = (heightPx - 1) / 2;
  for (let y = 0; y < heightPx; y++) {
    for (let x = 0; x < widthPx; x++) {
      expected[y * widthPx + x] = Math.max(
        0,
        backgroundPhotonsPerPx + backgroundSlopePerPx.x * (x - cx) + backgroundSlopePerPx.y * (y - cy),
      );
    }
  }
  // 5σ holds all but ~4·10⁻⁶ of a Gaussian's photons
  const radius = Math.ceil(5 * sigmaPx) + 1;
  for (const spot of spots) {
    const xMin = Math.max(0, Math.floor(spot.x) - radius);
    const xMax = Math.min(widthPx - 1, Math.ceil(spot.x) + radius);
    const yMin = Math.max(0, Math.floor(spot.y) - radius);
    const yMax = Math.min(heightPx - 1, Math.ceil(spot.y) + radius);
    for (let y = yMin; y <= yMax; y++) {
      for (let x = xMin; x <= xMax; x++) {
        expected[y * widthPx + x] += spot.photons * gaussianPixelFraction(x - spot.x, y - spot.y, sigmaPx);
      }
    }
  }

  // noise and camera
  const out = new Float32Array(widthPx * heightPx);
  let nbSaturated = 0;
  for (let i = 0; i < out.length; i++) {
    let v = gainCountsPerPhoton * samplePoisson(expected[i], rng) + cameraOffsetCounts;
    if (readNoiseCounts > 0) v += readNoiseCounts * rng.normal();
    if (quantise16Bit) {
      v = Math.round(v);
      if (v < 0) v = 0;
      if (v > 65535) {
        v = 65535;
        nbSaturated++;
      }
    }
    out[i] = v;
  }
  return {
    raster: { data: out, width: widthPx, height: heightPx },
    expectedPhotons: { data: expected, width: widthPx, height: heightPx },
    nbSaturated,
  };
}
