import type { Raster } from '../types';

/** A fluorescence spot found by {@link detectSpots}, in pixels of the fluorescence frame. */
export interface FluorescenceSpot {
  /** Sub-pixel column of the spot centre (px). */
  readonly x: number;
  /** Sub-pixel row of the spot centre (px). */
  readonly y: number;
  /** Peak height of the fitted Gaussian above the local background (counts). */
  readonly amplitude: number;
  /** Fitted Gaussian standard deviation, or the PSF sigma when the fit was not used (px). */
  readonly sigmaPx: number;
  /** Integrated spot signal above the local background, 2π·amplitude·sigma² for a fit (counts). */
  readonly integratedCounts: number;
  /** Local background level per pixel under the spot, camera offset excluded (counts). */
  readonly backgroundCounts: number;
  /** integratedCounts over its noise (shot noise + background noise over 4πσ² pixels). */
  readonly snr: number;
  /** True when the 2-D Gaussian fit converged and stayed near the detected maximum; false for the centroid fallback. */
  readonly fitted: boolean;
}

/** Random source for the synthetic renderer: a seeded generator such as `createRng(seed)`. */
export interface SceneRng {
  /** Uniform sample in [0, 1). */
  uniform(): number;
  /** Standard normal sample. */
  normal(): number;
}

/** A spot to render: position in fluorescence pixels and its total photon budget. */
export interface SceneSpot {
  /** Column of the centre (px). */
  readonly x: number;
  /** Row of the centre (px). */
  readonly y: number;
  /** Expected total photons collected from this emitter (photons). */
  readonly photons: number;
}

export type { Raster };

/**
 * Which code runs a Gaussian filter: `'auto'` the WebAssembly SIMD kernel where the engine supports it and the
 * JavaScript one otherwise, `'wasm'` only the WebAssembly kernel (an Error where it cannot run), `'js'` only the
 * JavaScript kernel ({@link blurRows}).
 */
export type FilterImplementation = 'auto' | 'wasm' | 'js';
