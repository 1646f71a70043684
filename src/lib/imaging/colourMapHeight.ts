import { VIRIDIS_HEX } from './viridis';

/** A raster of values in one unit (nm for AFM height maps), row-major. */
export interface Raster {
  data: ArrayLike<number>;
  width: number;
  height: number;
}

export interface ColourMapOptions {
  /** Height shown with the first viridis colour; lower values are clamped to it (nm). */
  minNm: number;
  /** Height shown with the last viridis colour; higher values are clamped to it (nm). */
  maxNm: number;
  /** Number of evenly spaced colour-bar stops returned, ends included. @default 11 */
  nbStops?: number;
}

export interface ColourBarStop {
  /** Position along the bar, 0 at minNm and 1 at maxNm. */
  offset: number;
  valueNm: number;
  /** sRGB colour as '#rrggbb'. */
  colour: string;
}

export interface ColourMapResult {
  /** width × height × 3 bytes, RGB, row-major. */
  rgb: Uint8Array;
  width: number;
  height: number;
  colourBar: ColourBarStop[];
  /** Pixels that were not finite (NaN, ±Infinity); drawn black, a colour absent from viridis. */
  nbMissingPixels: number;
}

/** The 256 viridis colours as an RGB byte table. */
export const VIRIDIS_RGB: Uint8Array = Uint8Array.from(
  { length: 768 },
  (_, i) => parseInt(VIRIDIS_HEX.slice(i * 2, i * 2 + 2), 16),
);

/**
 * Colours a height map with viridis between minNm and maxNm (linear, clamped).
 * @param raster - heights (nm); not modified
 * @param options - the height range and the number of colour-bar stops
 * @returns RGB bytes, the colour bar and the count of missing pixels
 * @throws RangeError when minNm ≥ maxNm, a bound is not finite or the raster size disagrees
 * @see van der Walt & Smith, viridis colour map (https://bids.github.io/colormap/)
 */
export function colourMapHeight(raster: Raster, options: ColourMapOptions): ColourMapResult {
  const { minNm, maxNm, nbStops = 11 } = options;
  const { data, width, height } = raster;
  if (!Number.isFinite(minNm) || !Number.isFinite(maxNm) || !(maxNm > minNm)) {
    throw new RangeError(`colourMapHeight needs finite minNm < maxNm, got ${minNm} and ${maxNm}`);
  }
  if (data.length !== width * height) {
    throw new RangeError(`raster has ${data.length} values, expected ${width} × ${height}`);
  }
  if (!Number.isInteger(nbStops) || nbStops < 2) throw new RangeError(`nbStops must be an integer ≥ 2, got ${nbStops}`);
  const rgb = new Uint8Array(width * height * 3);
  const perIndex = 255 / (maxNm - minNm);
  let nbMissingPixels = 0;
  for (let i = 0; i < data.length; i++) {
    const v = data[i];
    if (!Number.isFinite(v)) { nbMissingPixels++; continue; }
    const k = v <= minNm ? 0 : v >= maxNm ? 255 : Math.round((v - minNm) * perIndex);
    rgb[i * 3] = VIRIDIS_RGB[k * 3];
    rgb[i * 3 + 1] = VIRIDIS_RGB[k * 3 + 1];
    rgb[i * 3 + 2] = VIRIDIS_RGB[k * 3 + 2];
  }
  const colourBar: ColourBarStop[] = [];
  for (let s = 0; s < nbStops; s++) {
    const offset = s / (nbStops - 1);
    const k = Math.round(offset * 255);
    colourBar.push({ offset, valueNm: minNm + offset * (maxNm - minNm), colour: `#${VIRIDIS_HEX.slice(k * 6, k * 6 + 6)}` });
  }
  return { rgb, width, height, colourBar, nbMissingPixels };
}
