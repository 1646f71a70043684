import bessel from 'bessel';
import { gaussianPixelFraction } from '../fluorescence/gaussianPixelFraction';
import type { Raster } from '../types';
import type { Rng } from './random';

/** One point emitter of a rendered channel (fluorescence px of that channel, photons). */
export interface ChannelEmitter {
  readonly x: number;
  readonly y: number;
  readonly photons: number;
}

/** Camera model of a rendered frame: counts = gain·photons + offset + read noise. */
export interface CameraModel {
  /** Bias added to every pixel (counts). */
  readonly offsetCounts: number;
  /** Counts per detected photon. */
  readonly gainCountsPerPhoton: number;
  /** SD of the Gaussian read noise (counts). */
  readonly readNoiseCounts: number;
}

/** Options of {@link renderCorrelativeChannel}. */
export interface RenderCorrelativeChannelOptions {
  readonly widthPx: number;
  readonly heightPx: number;
  readonly emitters: readonly ChannelEmitter[];
  /** 'airy': pixel-integrated Airy pattern; 'gaussian': pixel-integrated Gaussian. */
  readonly psf: 'airy' | 'gaussian';
  /** Emission wavelength (nm), numerical aperture and pixel size (nm/px) of the ideal PSF. */
  readonly emissionNm: number;
  readonly numericalAperture: number;
  readonly pixelSizeNm: number;
  /** Lateral stretch of the PSF over the ideal one (e.g. 1.15 for slight defocus), ≥ 1. */
  readonly widthFactor: number;
  /** Mean background at the frame centre (photons/px) and its slope (photons/px per px). */
  readonly backgroundPhotonsPerPx: number;
  readonly backgroundSlopePerPx: { readonly x: number; readonly y: number };
  readonly camera: CameraModel;
  readonly rng: Rng;
}

/** Output of {@link renderCorrelativeChannel}. */
export interface RenderCorrelativeChannelResult {
  /** The camera frame (counts, 16-bit integers). */
  readonly raster: Raster;
  /** Noise-free expected photons per pixel. */
  readonly expectedPhotons: Raster;
  /** Fraction of an emitter's photons inside the rendered disc (the Airy rings beyond it are dropped). */
  readonly enclosedFraction: number;
}

/** Airy rendering radius in optical units v = 2π·NA·r/λ: beyond it lie 1 − (1 − J0² − J1²) ≈ 3 % of the photons. */
const AIRY_V_MAX = 20;
const AIRY_TABLE_STEP = 0.002;
const SUBSAMPLES = 4;
const COARSE_SUBSAMPLES = 2;
/** Pixels within this distance of an emitter get SUBSAMPLES² samples, the rest COARSE_SUBSAMPLES² (px). */
const FINE_RADIUS_PX = 4;

/**
 * Render one fluorescence frame for a test scene with a PSF other than the Gaussian the analysis fits: a
 * pixel-integrated Airy pattern [2J₁(v)/v]² (stretched by `widthFactor`) or a pixel-integrated Gaussian of
 * σ = widthFactor·0.21λ/NA; a sloped photon background; Poisson photon noise; camera gain, offset and read noise;
 * rounding and clipping to 16 bits. Pure and seeded.
 *
 * @param options - see {@link RenderCorrelativeChannelOptions}
 * @returns the frame, the expected photons and the enclosed fraction of each emitter's photons
 * @throws RangeError for a non-positive size, wavelength, NA, pixel size or a width factor < 1
 * @see docs/references.md §4 (Airy pattern; Gaussian σ ≈ 0.21λ/NA, Zhang et al. 2007)
 */
export function renderCorrelativeChannel(options: RenderCorrelativeChannelOptions): RenderCorrelativeChannelResult {
  const {
    widthPx, heightPx, emitters, psf, emissionNm, numericalAperture, pixelSizeNm, widthFactor,
    backgroundPhotonsPerPx, backgroundSlopePerPx, camera, rng,
  } = options;
  if (!(Number.isInteger(widthPx) && widthPx > 0 && Number.isInteger(heightPx) && heightPx > 0)) {
    throw new RangeError(`widthPx and heightPx must be positive integers, got ${widthPx}×${heightPx}`);
  }
  if (!(emissionNm > 0) || !(numericalAperture > 0) || !(pixelSizeNm > 0)) {
    throw new RangeError('emissionNm, numericalAperture and pixelSizeNm must be > 0');
  }
  if (!(widthFactor >= 1)) throw new RangeError(`widthFactor must be ≥ 1, got ${widthFactor}`);
  const expected = new Float32Array(widthPx * heightPx);
  const cx = (widthPx - 1) / 2;
  const cy = (heightPx - 1) / 2;
  for (let y = 0; y < heightPx; y++) {
    for (let x = 0; x < widthPx; x++) {
      expected[y * widthPx + x] = Math.max(0, backgroundPhotonsPerPx + backgroundSlopePerPx.x * (x - cx) + backgroundSlopePerPx.y * (y - cy));
    }
  }
  let enclosedFraction: number;
  if (psf === 'airy') {
    // v per px of radius; the plane integral of [2J₁(v)/v]² is 4π/k², so k²/(4π) normalises it to one photon
    const kPerPx = (2 * Math.PI * numericalAperture * pixelSizeNm) / (emissionNm * widthFactor);
    const table = airyTable();
    const norm = (kPerPx * kPerPx) / (4 * Math.PI);
    const radiusPx = AIRY_V_MAX / kPerPx;
    const j0 = bessel.besselj(AIRY_V_MAX, 0);
    const j1 = bessel.besselj(AIRY_V_MAX, 1);
    enclosedFraction = 1 - j0 * j0 - j1 * j1;
    for (const e of emitters) {
      forEachPixelNear(e, radiusPx, widthPx, heightPx, (x, y) => {
        // fine sub-sampling near the core, coarse in the slowly varying rings
        const n = Math.hypot(x - e.x, y - e.y) < FINE_RADIUS_PX ? SUBSAMPLES : COARSE_SUBSAMPLES;
        let sum = 0;
        for (let sy = 0; sy < n; sy++) {
          const dy = y - 0.5 + (sy + 0.5) / n - e.y;
          for (let sx = 0; sx < n; sx++) {
            const dx = x - 0.5 + (sx + 0.5) / n - e.x;
            const v = kPerPx * Math.sqrt(dx * dx + dy * dy);
            if (v < AIRY_V_MAX) sum += lookup(table, v);
          }
        }
        expected[y * widthPx + x] += (e.photons * sum * norm) / (n * n);
      });
    }
  } else {
    const sigmaPx = (widthFactor * 0.21 * emissionNm) / numericalAperture / pixelSizeNm;
    const radiusPx = Math.ceil(5 * sigmaPx) + 1;
    enclosedFraction = 1;
    for (const e of emitters) {
      forEachPixelNear(e, radiusPx, widthPx, heightPx, (x, y) => {
        expected[y * widthPx + x] += e.photons * gaussianPixelFraction(x - e.x, y - e.y, sigmaPx);
      });
    }
  }
  const data = new Float32Array(widthPx * heightPx);
  for (let i = 0; i < data.length; i++) {
    let v = camera.gainCountsPerPhoton * rng.poisson(expected[i]) + camera.offsetCounts;
    if (camera.readNoiseCounts > 0) v += camera.readNoiseCounts * rng.normal();
    data[i] = Math.min(65535, Math.max(0, Math.round(v)));
  }
  return {
    raster: { data, width: widthPx, height: heightPx },
    expectedPhotons: { data: expected, width: widthPx, height: heightPx },
    enclosedFraction,
  };
}

function forEachPixelNear(p: { x: number; y: number }, radiusPx: number, w: number, h: number, f: (x: number, y: number) => void): void {
  const x0 = Math.max(0, Math.floor(p.x - radiusPx));
  const x1 = Math.min(w - 1, Math.ceil(p.x + radiusPx));
  const y0 = Math.max(0, Math.floor(p.y - radiusPx));
  const y1 = Math.min(h - 1, Math.ceil(p.y + radiusPx));
  for (let y = y0; y <= y1; y++) for (let x = x0; x <= x1; x++) f(x, y);
}

let cachedTable: Float64Array | null = null;

/** [2J₁(v)/v]² on a fine grid of v (computed once; pure). */
function airyTable(): Float64Array {
  if (cachedTable) return cachedTable;
  const n = Math.ceil(AIRY_V_MAX / AIRY_TABLE_STEP) + 2;
  const t = new Float64Array(n);
  t[0] = 1;
  for (let i = 1; i < n; i++) {
    const v = i * AIRY_TABLE_STEP;
    const a = (2 * bessel.besselj(v, 1)) / v;
    t[i] = a * a;
  }
  cachedTable = t;
  return t;
}

function lookup(table: Float64Array, v: number): number {
  const f = v / AIRY_TABLE_STEP;
  const i = Math.floor(f);
  const w = f - i;
  return table[i] * (1 - w) + table[i + 1] * w;
}
