/**
 * Horizontal runs of foreground pixels in raster order: run k covers columns start[k] … end[k] − 1 of row[k].
 * Runs are maximal, so two runs of one row are separated by at least one background pixel.
 */
export interface RunTable {
  readonly nbRuns: number;
  readonly start: Int32Array;
  readonly end: Int32Array;
  readonly row: Int32Array;
  /** Index of each row's first run; rowFirst[height] = nbRuns. */
  readonly rowFirst: Int32Array;
  /** Foreground pixels (the sum of the run lengths). */
  readonly nbPixels: number;
}

/**
 * Runs of the non-zero pixels of a mask.
 *
 * @param mask - row-major, non-zero = foreground
 * @returns the runs, see {@link RunTable}
 */
export function maskRuns(mask: Uint8Array, width: number, height: number): RunTable {
  return collectRuns(width, height, (y, start, end, row, k) => maskRowRuns(mask, y * width, width, y, start, end, row, k));
}

/**
 * Runs of the pixels strictly above a threshold (NaN is background).
 *
 * @param data - row-major values
 * @param threshold - pixels with data > threshold are foreground
 * @returns the runs, see {@link RunTable}
 */
export function runsAbove(data: Float32Array, width: number, height: number, threshold: number): RunTable {
  return collectRuns(width, height, (y, start, end, row, k) => aboveRowRuns(data, y * width, width, threshold, y, start, end, row, k));
}

/**
 * Run table built row by row by `rowRuns`, which appends the runs of row y at index k and returns the new count.
 * Plain typed arrays that grow by doubling, and no class: a class instance's hidden classes die in a full
 * collection when no instance survives, and code optimised for them is then thrown away on the next call.
 */
function collectRuns(
  width: number, height: number,
  rowRuns: (y: number, start: Int32Array, end: Int32Array, row: Int32Array, k: number) => number,
): RunTable {
  const perRow = (width + 1) >> 1; // most runs one row can hold
  let capacity = Math.max(256, 4 * height);
  let start: Int32Array = new Int32Array(capacity);
  let end: Int32Array = new Int32Array(capacity);
  let row: Int32Array = new Int32Array(capacity);
  const rowFirst = new Int32Array(height + 1);
  let nbRuns = 0;
  for (let y = 0; y < height; y++) {
    rowFirst[y] = nbRuns;
    if (nbRuns + perRow > capacity) {
      capacity = Math.max(2 * capacity, nbRuns + perRow);
      start = grown(start, capacity, nbRuns);
      end = grown(end, capacity, nbRuns);
      row = grown(row, capacity, nbRuns);
    }
    nbRuns = rowRuns(y, start, end, row, nbRuns);
  }
  rowFirst[height] = nbRuns;
  let nbPixels = 0;
  for (let k = 0; k < nbRuns; k++) nbPixels += end[k] - start[k];
  return { nbRuns, start, end, row, rowFirst, nbPixels };
}

/** A copy of a[0..n) in a new array of the given capacity. */
function grown(a: Int32Array, capacity: number, n: number): Int32Array {
  const b = new Int32Array(capacity);
  b.set(a.subarray(0, n));
  return b;
}

/** Appends the runs of one mask row at index k; returns the new run count. One function per row so V8 optimises it whole. */
function maskRowRuns(mask: Uint8Array, at: number, width: number, y: number, start: Int32Array, end: Int32Array, row: Int32Array, k: number): number {
  let x = 0;
  while (x < width) {
    // skip background four pixels per test: most of a mask is background
    while (x + 4 <= width && (mask[at + x] | mask[at + x + 1] | mask[at + x + 2] | mask[at + x + 3]) === 0) x += 4;
    while (x < width && mask[at + x] === 0) x++;
    if (x === width) break;
    const s = x;
    while (x < width && mask[at + x] !== 0) x++;
    start[k] = s;
    end[k] = x;
    row[k] = y;
    k++;
  }
  return k;
}

/** Appends the runs of data > threshold in one row at index k; returns the new run count. */
function aboveRowRuns(
  data: Float32Array, at: number, width: number, threshold: number, y: number, start: Int32Array, end: Int32Array, row: Int32Array, k: number,
): number {
  let x = 0;
  while (x < width) {
    // skip background four pixels per test (`+(cond)` has no jump): most of a height map is background
    while (x + 4 <= width && (+(data[at + x] > threshold) | +(data[at + x + 1] > threshold) | +(data[at + x + 2] > threshold) | +(data[at + x + 3] > threshold)) === 0) x += 4;
    while (x < width && !(data[at + x] > threshold)) x++;
    if (x === width) break;
    const s = x;
    while (x < width && data[at + x] > threshold) x++;
    start[k] = s;
    end[k] = x;
    row[k] = y;
    k++;
  }
  return k;
}
