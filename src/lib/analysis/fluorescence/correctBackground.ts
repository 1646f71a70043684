import { quickselect } from 'simple-statistics';
import type { Raster } from '../types';
import { robustNoiseSigma } from './robustNoiseSigma';

/** Options of {@link correctBackground}. */
export interface CorrectBackgroundOptions {
  /**
   * Camera offset (bias) added by the camera to every pixel, subtracted first (counts).
   * @default 0
   */
  cameraOffsetCounts?: number;
  /**
   * Side of the square tiles whose robust level forms the coarse background grid (px). It should be several
   * times the PSF width so that spots cover a small part of a tile.
   * @default 64
   */
  tileSizePx?: number;
  /**
   * Quantile of each tile's pixels taken as its background level (0–1). The median resists sparse spots.
   * @default 0.5
   */
  quantile?: number;
  /**
   * Only every n-th pixel in each direction is sampled inside a tile, for speed (px).
   * @default 2
   */
  sampleStridePx?: number;
}

/** Summary of the smooth background model. */
export interface BackgroundModelSummary {
  /** Camera offset subtracted before the background (counts). */
  readonly cameraOffsetCounts: number;
  /** Tile side actually used (px). */
  readonly tileSizePx: number;
  /** Grid columns × rows. */
  readonly gridWidth: number;
  readonly gridHeight: number;
  /** Tile levels, row-major, offset already subtracted (counts). */
  readonly gridCounts: Float32Array;
  /** Lowest, median and highest tile level (counts). */
  readonly minCounts: number;
  readonly medianCounts: number;
  readonly maxCounts: number;
  /** Robust SD (1.4826·MAD) of the corrected image: the per-pixel noise (counts). */
  readonly residualSigmaCounts: number;
}

/** Result of {@link correctBackground}. */
export interface CorrectBackgroundResult {
  /** Raw − offset − smooth background (counts); zero-mean away from spots. */
  readonly corrected: Raster;
  /** The smooth background model, offset excluded (counts per pixel). */
  readonly background: Raster;
  readonly summary: BackgroundModelSummary;
}

/**
 * Subtracts the camera offset and a smooth large-scale background from one fluorescence channel.
 *
 * The frame is cut into tiles; each tile's background level is a quantile (median by default) of a strided
 * sample of its pixels; the levels, placed at tile centres, are interpolated bilinearly to every pixel
 * (held constant beyond the outermost centres).
 *
 * @param raster - raw frame (counts); not modified
 * @param options - see {@link CorrectBackgroundOptions}
 * @returns corrected image, background model image and summary
 * @throws RangeError for an empty raster or options out of range
 */
export function correctBackground(raster: Raster, options: CorrectBackgroundOptions = {}): CorrectBackgroundResult {
  const { cameraOffsetCounts = 0, tileSizePx = 64, quantile = 0.5, sampleStridePx = 2 } = options;
  const { width, height, data } = raster;
  if (width < 1 || height < 1 || data.length !== width * height) {
    throw new RangeError(`raster must be non-empty with data.length = width·height, got ${width}×${height}, ${data.length}`);
  }
  if (!(tileSizePx >= 4)) throw new RangeError(`tileSizePx must be at least 4, got ${tileSizePx}`);
  if (!(quantile >= 0 && quantile <= 1)) throw new RangeError(`quantile must be within [0, 1], got ${quantile}`);
  if (!(sampleStridePx >= 1)) throw new RangeError(`sampleStridePx must be at least 1, got ${sampleStridePx}`);

  // grid of tile levels
  const gridWidth = Math.max(1, Math.round(width / tileSizePx));
  const gridHeight = Math.max(1, Math.round(height / tileSizePx));
  const tileW = width / gridWidth;
  const tileH = height / gridHeight;
  const gridCounts = new Float32Array(gridWidth * gridHeight);
  const scratch = new Float64Array(Math.ceil(tileW / sampleStridePx + 1) * Math.ceil(tileH / sampleStridePx + 1));
  for (let gy = 0; gy < gridHeight; gy++) {
    const y0 = Math.round(gy * tileH);
    const y1 = Math.round((gy + 1) * tileH);
    for (let gx = 0; gx < gridWidth; gx++) {
      const x0 = Math.round(gx * tileW);
      const x1 = Math.round((gx + 1) * tileW);
      let n = 0;
      for (let y = y0; y < y1; y += sampleStridePx) {
        const base = y * width;
        for (let x = x0; x < x1; x += sampleStridePx) scratch[n++] = data[base + x];
      }
      const k = Math.min(n - 1, Math.max(0, Math.round(quantile * (n - 1))));
      // simple-statistics' quickselect only indexes and swaps, so a typed array is fine.
      quickselect(scratch as unknown as number[], k, 0, n - 1);
      gridCounts[gy * gridWidth + gx] = scratch[k] - cameraOffsetCounts;
    }
  }

  // bilinear interpolation between tile centres: per row, the levels are first interpolated along y on the grid
  // (gridWidth values), then along x with per-column weights computed once
  const colIndex = new Int32Array(width);
  const colWeight = new Float64Array(width);
  for (let x = 0; x < width; x++) {
    const g = Math.min(Math.max((x + 0.5) / tileW - 0.5, 0), gridWidth - 1);
    const i = Math.min(Math.floor(g), Math.max(0, gridWidth - 2));
    colIndex[x] = i;
    colWeight[x] = gridWidth > 1 ? g - i : 0;
  }
  const rowLevels = new Float64Array(gridWidth + 1);
  const background = new Float32Array(width * height);
  const corrected = new Float32Array(width * height);
  for (let y = 0; y < height; y++) {
    const g = Math.min(Math.max((y + 0.5) / tileH - 0.5, 0), gridHeight - 1);
    const j = Math.min(Math.floor(g), Math.max(0, gridHeight - 2));
    const wy = gridHeight > 1 ? g - j : 0;
    const rowA = j * gridWidth;
    const rowB = (gridHeight > 1 ? j + 1 : j) * gridWidth;
    for (let i = 0; i < gridWidth; i++) rowLevels[i] = gridCounts[rowA + i] + wy * (gridCounts[rowB + i] - gridCounts[rowA + i]);
    rowLevels[gridWidth] = rowLevels[gridWidth - 1]; // a one-column grid reads past its end with weight 0
    const base = y * width;
    for (let x = 0; x < width; x++) {
      const i = colIndex[x];
      const a = rowLevels[i];
      const b = a + colWeight[x] * (rowLevels[i + 1] - a);
      background[base + x] = b;
      corrected[base + x] = data[base + x] - cameraOffsetCounts - b;
    }
  }

  // summary
  const sortedLevels = Float32Array.from(gridCounts).sort();
  const residual = robustNoiseSigma(corrected);
  return {
    corrected: { data: corrected, width, height },
    background: { data: background, width, height },
    summary: {
      cameraOffsetCounts,
      tileSizePx: Math.min(tileW, tileH),
      gridWidth,
      gridHeight,
      gridCounts,
      minCounts: sortedLevels[0],
      medianCounts: sortedLevels[sortedLevels.length >> 1],
      maxCounts: sortedLevels[sortedLevels.length - 1],
      residualSigmaCounts: residual.sigma,
    },
  };
}
