export interface ContrastResult {
  /** Value at the low percentile (unit of the data: nm for heights, counts for fluorescence). */
  min: number;
  /** Value at the high percentile (same unit). */
  max: number;
  /** Finite values the percentiles were taken from (NaN and ±Infinity are skipped). */
  nbFinite: number;
}

/**
 * Display range from two percentiles of the finite values, with linear interpolation between order
 * statistics: h = (n − 1)·p/100, value = x[⌊h⌋] + (h − ⌊h⌋)(x[⌊h⌋+1] − x[⌊h⌋]).
 * Runs in O(n) with quickselect on a copy, so 8192 × 8192 rasters need no full sort.
 * @param data - the raster values; not modified
 * @param low - low percentile, 0–100. @default 0.5
 * @param high - high percentile, 0–100, above low. @default 99.5
 * @returns the two values and the number of finite values; min = max = NaN when there are none
 * @throws RangeError when the percentiles are out of order or out of 0–100
 * @see Hyndman & Fan (1996), Sample quantiles in statistical packages, Am. Stat. 50:361, definition 7 (from memory)
 */
export function contrastFromPercentiles(data: ArrayLike<number>, low = 0.5, high = 99.5): ContrastResult {
  if (!(low >= 0 && high <= 100 && low < high)) {
    throw new RangeError(`percentiles must satisfy 0 ≤ low < high ≤ 100, got ${low} and ${high}`);
  }
  const finite = new Float64Array(data.length);
  let n = 0;
  for (let i = 0; i < data.length; i++) {
    const v = data[i];
    if (Number.isFinite(v)) finite[n++] = v;
  }
  if (n === 0) return { min: NaN, max: NaN, nbFinite: 0 };
  const values = finite.subarray(0, n);
  return { min: percentile(values, low), max: percentile(values, high), nbFinite: n };
}

/** Percentile of `a` (reordered in place). */
function percentile(a: Float64Array, p: number): number {
  const h = ((a.length - 1) * p) / 100;
  const lo = Math.floor(h);
  const vLo = select(a, lo);
  if (h === lo) return vLo;
  // after select, everything right of lo is ≥ a[lo]: the next order statistic is their minimum
  let vHi = Infinity;
  for (let i = lo + 1; i < a.length; i++) if (a[i] < vHi) vHi = a[i];
  return vLo + (h - lo) * (vHi - vLo);
}

/** k-th smallest value (0-based) by quickselect with median-of-three pivots; reorders `a`. */
function select(a: Float64Array, k: number): number {
  let left = 0;
  let right = a.length - 1;
  while (right > left) {
    const mid = (left + right) >>> 1;
    // median of three as pivot avoids the quadratic case on sorted input
    const x = a[left]; const y = a[mid]; const z = a[right];
    const pivot = x < y ? (y < z ? y : x < z ? z : x) : (x < z ? x : y < z ? z : y);
    let i = left;
    let j = right;
    while (i <= j) {
      while (a[i] < pivot) i++;
      while (a[j] > pivot) j--;
      if (i <= j) {
        const t = a[i]; a[i] = a[j]; a[j] = t;
        i++; j--;
      }
    }
    if (k <= j) right = j;
    else if (k >= i) left = i;
    else return a[k];
  }
  return a[k];
}
