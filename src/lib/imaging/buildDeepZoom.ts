import sharp from 'sharp';

export interface DeepZoomOptions {
  /** Tile edge without overlap (pixels). @default 254 */
  tileSize?: number;
  /** Pixels each tile shares with its neighbours on every inner side. @default 1 */
  overlap?: number;
  /** Tile file format; PNG is lossless, JPEG smaller. @default 'png' */
  format?: 'png' | 'jpeg';
  /** JPEG quality, 1–100 (ignored for PNG). @default 90 */
  quality?: number;
  /** Tiles encoded at the same time. @default 4 */
  concurrency?: number;
}

export interface DeepZoomLevel {
  level: number;
  width: number;
  height: number;
  cols: number;
  rows: number;
}

export interface DeepZoomTile {
  level: number;
  col: number;
  row: number;
  /** Path of the tile inside the `<name>_files/` folder: `level/col_row.ext`. */
  path: string;
  bytes: Buffer;
}

export interface DeepZoomResult {
  /** The .dzi descriptor (XML). */
  dziXml: string;
  maxLevel: number;
  /** Geometry of every level, 0 (1 × 1) to maxLevel (full size). */
  levels: DeepZoomLevel[];
  /** Encoded tiles, from the full-size level down to level 0; each level is downsampled from the one above. */
  tiles: () => AsyncGenerator<DeepZoomTile>;
}

/**
 * Deep Zoom pyramid geometry: level L is ceil(size / 2^(maxLevel − L)) with maxLevel = ceil(log2(max(w, h))),
 * cut into ceil(levelSize / tileSize) columns and rows.
 * @param width - full image width (pixels)
 * @param height - full image height (pixels)
 * @param tileSize - tile edge without overlap (pixels)
 * @returns one entry per level, level 0 first
 * @throws RangeError on non-positive sizes
 */
export function deepZoomLevels(width: number, height: number, tileSize: number): DeepZoomLevel[] {
  if (!(Number.isInteger(width) && Number.isInteger(height) && width > 0 && height > 0)) {
    throw new RangeError(`image size must be positive integers, got ${width} × ${height}`);
  }
  if (!(Number.isInteger(tileSize) && tileSize > 0)) throw new RangeError(`tileSize must be a positive integer, got ${tileSize}`);
  const maxLevel = Math.ceil(Math.log2(Math.max(width, height)));
  const levels: DeepZoomLevel[] = [];
  for (let level = 0; level <= maxLevel; level++) {
    const f = 2 ** (maxLevel - level);
    const w = Math.ceil(width / f);
    const h = Math.ceil(height / f);
    levels.push({ level, width: w, height: h, cols: Math.ceil(w / tileSize), rows: Math.ceil(h / tileSize) });
  }
  return levels;
}

/**
 * Cuts an RGB image into a Deep Zoom pyramid. Only the current level and the next smaller one are held
 * in memory; tiles are produced lazily so the caller can upload them as they come.
 *
 * Why not sharp's own `.tile({ layout: 'dz' })`: it writes a folder or a zip archive, while tiles here go
 * to object storage one by one; sharp still does every resize and encode.
 * @param rgb - width × height × 3 bytes, RGB, row-major; not modified
 * @param width - image width (pixels)
 * @param height - image height (pixels)
 * @param options - tile size, overlap, format
 * @returns the DZI XML, the level geometry and a tile generator
 * @throws RangeError when the buffer size disagrees with width × height × 3 or options are invalid
 * @see Microsoft, Deep Zoom File Format Schema, Image element (learn.microsoft.com, cc645043)
 */
export function buildDeepZoom(rgb: Uint8Array, width: number, height: number, options: DeepZoomOptions = {}): DeepZoomResult {
  const { tileSize = 254, overlap = 1, format = 'png', quality = 90, concurrency = 4 } = options;
  if (rgb.length !== width * height * 3) {
    throw new RangeError(`rgb has ${rgb.length} bytes, expected ${width} × ${height} × 3 = ${width * height * 3}`);
  }
  if (!(Number.isInteger(overlap) && overlap >= 0 && overlap < tileSize)) {
    throw new RangeError(`overlap must be an integer in [0, tileSize), got ${overlap}`);
  }
  const levels = deepZoomLevels(width, height, tileSize);
  const maxLevel = levels.length - 1;
  const ext = format === 'jpeg' ? 'jpeg' : 'png';
  const dziXml = `<?xml version="1.0" encoding="UTF-8"?>\n`
    + `<Image xmlns="http://schemas.microsoft.com/deepzoom/2008" Format="${ext}" Overlap="${overlap}" TileSize="${tileSize}">\n`
    + `  <Size Width="${width}" Height="${height}"/>\n`
    + `</Image>\n`;

  async function encodeTile(level: Buffer | Uint8Array, lw: number, lh: number, x0: number, y0: number, x1: number, y1: number): Promise<Buffer> {
    const tw = x1 - x0;
    const th = y1 - y0;
    // copy the tile's rows out so sharp only sees a small buffer
    const tile = Buffer.allocUnsafe(tw * th * 3);
    for (let y = 0; y < th; y++) {
      const from = ((y0 + y) * lw + x0) * 3;
      tile.set(level.subarray(from, from + tw * 3), y * tw * 3);
    }
    const img = sharp(tile, { raw: { width: tw, height: th, channels: 3 } });
    return format === 'jpeg' ? img.jpeg({ quality }).toBuffer() : img.png().toBuffer();
  }

  async function* tiles(): AsyncGenerator<DeepZoomTile> {
    let current: Uint8Array | Buffer = rgb;
    for (let L = maxLevel; L >= 0; L--) {
      const { width: lw, height: lh, cols, rows } = levels[L];
      const jobs: Array<{ col: number; row: number; rect: [number, number, number, number] }> = [];
      for (let row = 0; row < rows; row++) {
        for (let col = 0; col < cols; col++) {
          // each tile extends `overlap` pixels into its neighbours, clipped at the image border
          const x0 = Math.max(0, col * tileSize - overlap);
          const y0 = Math.max(0, row * tileSize - overlap);
          const x1 = Math.min(lw, (col + 1) * tileSize + overlap);
          const y1 = Math.min(lh, (row + 1) * tileSize + overlap);
          jobs.push({ col, row, rect: [x0, y0, x1, y1] });
        }
      }
      for (let i = 0; i < jobs.length; i += concurrency) {
        const batch = jobs.slice(i, i + concurrency);
        const encoded = await Promise.all(batch.map((j) => encodeTile(current, lw, lh, ...j.rect)));
        for (let k = 0; k < batch.length; k++) {
          const { col, row } = batch[k];
          yield { level: L, col, row, path: `${L}/${col}_${row}.${ext}`, bytes: encoded[k] };
        }
      }
      if (L > 0) {
        const next = levels[L - 1];
        // downsample from the level just made, so only two levels are alive at once
        current = await sharp(current, { raw: { width: lw, height: lh, channels: 3 } })
          .resize(next.width, next.height, { fit: 'fill', kernel: 'cubic' })
          .raw()
          .toBuffer();
      }
    }
  }

  return { dziXml, maxLevel, levels, tiles };
}
