/** Output of {@link updateBackgroundMask}. */
export interface UpdateBackgroundMaskResult {
  readonly nbBackground: number;
  /** Pixels whose background flag changed. */
  readonly nbChanges: number;
}

/** Widest dilation the word-wide path handles: a shift by up to 4 bytes reaches the next 32-bit word only. */
const MAX_WORD_RADIUS = 4;
const ONES = 0x01010101;

/**
 * background = NOT ((values > cut) dilated by a (2r+1)² square), counting the background pixels and the flags
 * that changed in the same pass. Separable: flags are dilated along each row, then OR-ed down the columns
 * while the mask is updated.
 *
 * When the width is a multiple of 4 and r ≤ 4, both steps work on four 0/1 bytes per 32-bit word (V8 does not
 * vectorise byte loops), and the row-dilated flags live in a ring of 2r + 1 rows that stays in cache, so no
 * scratch frame is written. Otherwise a byte-wise path with a scratch frame gives the same mask.
 * Own kernel rather than image-js morphology: it fuses the float threshold, the dilation and the mask update,
 * with no image object per levelling pass.
 *
 * @param values - residual heights (nm), row-major
 * @param cut - pixels strictly above this are excluded, with their neighbourhood (nm)
 * @param r - dilation radius (px), ≥ 0
 * @param background - previous mask in, new mask out (1 = background)
 */
export function updateBackgroundMask(
  values: Float32Array, cut: number, width: number, height: number, r: number, background: Uint8Array,
): UpdateBackgroundMaskResult {
  const counts = new Float64Array(2); // background pixels, changes
  if (width % 4 === 0 && r <= MAX_WORD_RADIUS && background.byteOffset % 4 === 0) {
    const nw = width >> 2;
    const ringRows = 2 * r + 1;
    const ring = new Int32Array(ringRows * nw);
    const bg32 = new Int32Array(background.buffer, background.byteOffset, nw * height);
    // row j of the row-dilated flags lives at ring[(j mod ringRows)·nw …]
    const slot = (j: number): number => (j % ringRows) * nw;
    for (let j = 0; j < Math.min(r, height); j++) flagAndDilateRowWords(values, j * width, cut, ring, slot(j), nw, r);
    for (let y = 0; y < height; y++) {
      if (y + r < height) flagAndDilateRowWords(values, (y + r) * width, cut, ring, slot(y + r), nw, r);
      // rows beyond ±r or off the map are read as a row already included (OR-ing it again changes nothing)
      const at = (d: number): number => slot(Math.min(height - 1, Math.max(0, y + Math.max(-r, Math.min(r, d)))));
      updateRowWords(ring, [at(-4), at(-3), at(-2), at(-1), at(0), at(1), at(2), at(3), at(4)], bg32, y * nw, nw, r, counts);
    }
  } else {
    const tmp = new Uint8Array(width * height);
    const lastRow = new Int32Array(width).fill(-r - 1);
    for (let y = 0; y < height; y++) dilateRowBytes(values, y * width, width, cut, r, tmp);
    for (let j = 0; j < Math.min(r, height); j++) noteFlaggedRow(tmp, j, width, lastRow);
    for (let y = 0; y < height; y++) {
      if (y + r < height) noteFlaggedRow(tmp, y + r, width, lastRow);
      updateRowBytes(background, y, width, y - r, lastRow, counts);
    }
  }
  return { nbBackground: counts[0], nbChanges: counts[1] };
}

/**
 * One row of (values > cut) as 0/1 bytes, four pixels per word, dilated by ±r pixels, into w32[at…]. Bytes are
 * little-endian, so pixel x + s of a word is the word shifted right by 8s bits, with the next word's low bytes
 * coming in from the top.
 */
function flagAndDilateRowWords(values: Float32Array, row: number, cut: number, w32: Int32Array, at: number, nw: number, r: number): void {
  let prev = 0;
  // flags (value > cut) of four pixels as the bytes of one word, without a branch; written out rather than
  // called because tsx-loaded modules do not get such helpers inlined
  let cur = +(values[row] > cut) | (+(values[row + 1] > cut) << 8) | (+(values[row + 2] > cut) << 16) | (+(values[row + 3] > cut) << 24);
  for (let k = 0; k < nw; k++) {
    const i = row + 4 * k + 4;
    const next = k + 1 < nw ? +(values[i] > cut) | (+(values[i + 1] > cut) << 8) | (+(values[i + 2] > cut) << 16) | (+(values[i + 3] > cut) << 24) : 0;
    let out = cur;
    for (let s = 1; s <= r; s++) {
      const t = 8 * s;
      // pixel x gets the flags of x − s (from the left) and x + s (from the right)
      out |= t === 32 ? prev | next : (cur << t) | (prev >>> (32 - t)) | (cur >>> t) | (next << (32 - t));
    }
    w32[at + k] = out;
    prev = cur;
    cur = next;
  }
}

/**
 * Mask row = NOT (OR of the ring rows at the nine offsets `rows` for d = −4…4), four pixels per word; adds to
 * counts. Only the middle five are read when r ≤ 2.
 */
function updateRowWords(ring: Int32Array, rows: readonly number[], bg32: Int32Array, at: number, nw: number, r: number, counts: Float64Array): void {
  const [m4, m3, m2, m1, c0, p1, p2, p3, p4] = rows;
  let nbBackground = 0;
  let nbChanges = 0;
  if (r <= 2) {
    for (let k = 0; k < nw; k++) {
      const b = ~(ring[m2 + k] | ring[m1 + k] | ring[c0 + k] | ring[p1 + k] | ring[p2 + k]) & ONES;
      // each byte is 0 or 1, so the top byte of b·0x01010101 is the count of ones
      nbChanges += Math.imul(b ^ bg32[at + k], ONES) >>> 24;
      nbBackground += Math.imul(b, ONES) >>> 24;
      bg32[at + k] = b;
    }
  } else {
    for (let k = 0; k < nw; k++) {
      const b = ~(ring[m4 + k] | ring[m3 + k] | ring[m2 + k] | ring[m1 + k] | ring[c0 + k] | ring[p1 + k] | ring[p2 + k] | ring[p3 + k] | ring[p4 + k]) & ONES;
      nbChanges += Math.imul(b ^ bg32[at + k], ONES) >>> 24;
      nbBackground += Math.imul(b, ONES) >>> 24;
      bg32[at + k] = b;
    }
  }
  counts[0] += nbBackground;
  counts[1] += nbChanges;
}

/**
 * Byte-wise row dilation: tmp = some value within ±r columns is above the cut. Tracks the last column above the
 * cut among those looked at (r ahead of x), so each pixel costs one compare.
 */
function dilateRowBytes(values: Float32Array, row: number, width: number, cut: number, r: number, tmp: Uint8Array): void {
  let last = -r - 1;
  for (let j = 0; j < Math.min(r, width); j++) if (values[row + j] > cut) last = j;
  let x = 0;
  for (; x < width - r; x++) {
    if (values[row + x + r] > cut) last = x + r;
    tmp[row + x] = +(last >= x - r);
  }
  for (; x < width; x++) tmp[row + x] = +(last >= x - r);
}

/** lastRow[x] = j wherever row j of tmp is set. */
function noteFlaggedRow(tmp: Uint8Array, j: number, width: number, lastRow: Int32Array): void {
  const row = j * width;
  for (let x = 0; x < width; x++) if (tmp[row + x]) lastRow[x] = j;
}

/** Mask row y = no flagged row at or after `reach` in its column; adds to counts. */
function updateRowBytes(background: Uint8Array, y: number, width: number, reach: number, lastRow: Int32Array, counts: Float64Array): void {
  const row = y * width;
  let nbBackground = 0;
  let nbChanges = 0;
  for (let x = 0; x < width; x++) {
    const b = +(lastRow[x] < reach);
    nbChanges += b ^ background[row + x];
    background[row + x] = b;
    nbBackground += b;
  }
  counts[0] += nbBackground;
  counts[1] += nbChanges;
}
