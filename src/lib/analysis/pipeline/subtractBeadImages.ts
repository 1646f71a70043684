import { median } from 'simple-statistics';
import type { Raster } from '../types';

/** One bead image in a frame: fitted centre (px) and integrated counts above background (counts), e.g. from fitBeadSpots. */
export interface BeadImage {
  readonly x: number;
  readonly y: number;
  readonly integratedCounts: number;
}

/** Options of {@link subtractBeadImages}. */
export interface SubtractBeadImagesOptions {
  /** Radius of the profile and of the subtraction (px). @default 12 */
  radiusPx?: number;
  /** Radial bin width of the profile (px). @default 0.25 */
  binPx?: number;
}

/** Result of {@link subtractBeadImages}. */
export interface SubtractBeadImagesResult {
  /** The frame with every bead's light taken out (counts); the background stays. */
  readonly raster: Raster;
  /** The measured bead profile per unit integrated count, per radial bin (1/px²). */
  readonly profile: Float64Array;
}

/**
 * Take the light of bright beads out of a frame before vesicles are measured in it. A bead's image is neither the
 * Gaussian the joint fit assumes nor point-like (the optics' rings, the bead's own size), and at 20–100× a
 * vesicle's brightness its mis-modelled halo would bias the background of vesicles half a micron away. So the
 * bead image is measured on the beads themselves: the median over beads of the radial profile (counts above the
 * bead's local background, the median of a 2 px annulus just outside the profile, per integrated count, in radial
 * bins about the fitted centre), then each bead's scaled copy is subtracted. Written here because the profile comes from the field's own beads; no package does this.
 *
 * @param raster - raw frame (counts); not modified
 * @param beads - the beads' fitted images in this frame
 * @param options - see {@link SubtractBeadImagesOptions}
 * @returns the frame without the beads' light, and the profile used
 */
export function subtractBeadImages(raster: Raster, beads: readonly BeadImage[], options: SubtractBeadImagesOptions = {}): SubtractBeadImagesResult {
  const { radiusPx = 12, binPx = 0.25 } = options;
  const { data, width, height } = raster;
  const nbBins = Math.ceil(radiusPx / binPx);
  const perBead = beads.map((b) => {
    const ring: number[] = [];
    forEachNear(b, radiusPx + 2, width, height, (x, y, r) => {
      if (r >= radiusPx) ring.push(data[y * width + x]);
    });
    const background = ring.length ? median(ring) : 0;
    const sum = new Float64Array(nbBins);
    const count = new Float64Array(nbBins);
    forEachNear(b, radiusPx, width, height, (x, y, r) => {
      const k = Math.floor(r / binPx);
      sum[k] += (data[y * width + x] - background) / b.integratedCounts;
      count[k] += 1;
    });
    return { sum, count };
  });
  const profile = new Float64Array(nbBins);
  for (let k = 0; k < nbBins; k++) {
    const values = perBead.filter((p) => p.count[k] > 0).map((p) => p.sum[k] / p.count[k]);
    if (values.length) profile[k] = median(values);
  }
  const out = Float32Array.from(data);
  for (const b of beads) {
    forEachNear(b, radiusPx, width, height, (x, y, r) => {
      const f = r / binPx - 0.5;
      const k = Math.max(0, Math.min(nbBins - 1, Math.floor(f)));
      const k1 = Math.min(nbBins - 1, k + 1);
      const w = Math.max(0, Math.min(1, f - k));
      out[y * width + x] -= b.integratedCounts * (profile[k] * (1 - w) + profile[k1] * w);
    });
  }
  return { raster: { data: out, width, height }, profile };
}


function forEachNear(p: { x: number; y: number }, radiusPx: number, w: number, h: number, f: (x: number, y: number, r: number) => void): void {
  const x0 = Math.max(0, Math.ceil(p.x - radiusPx));
  const x1 = Math.min(w - 1, Math.floor(p.x + radiusPx));
  const y0 = Math.max(0, Math.ceil(p.y - radiusPx));
  const y1 = Math.min(h - 1, Math.floor(p.y + radiusPx));
  for (let y = y0; y <= y1; y++) {
    for (let x = x0; x <= x1; x++) {
      const r = Math.hypot(x - p.x, y - p.y);
      if (r < radiusPx) f(x, y, r);
    }
  }
}
