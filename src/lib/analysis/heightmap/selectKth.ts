/**
 * k-th smallest of the first `n` entries of `values` (0-based), by Hoare's selection with a
 * median-of-three pivot. REORDERS `values[0..n)`: pass a scratch copy. Written here because
 * the packages at hand sort the whole array (O(n log n)), and medians of megapixel maps are
 * needed several times per levelling pass.
 *
 * @param values - scratch buffer (any unit); entries 0..n−1 are permuted
 * @param n - number of valid entries
 * @param k - rank wanted, 0 ≤ k < n
 * @returns the k-th smallest value
 * @throws RangeError when k is outside [0, n)
 * @see Hoare CAR 1961, Commun ACM 4(7):321, "Algorithm 65: find"
 */
export function selectKth(values: Float32Array | Float64Array, n: number, k: number): number {
  if (!(k >= 0 && k < n && n <= values.length)) throw new RangeError(`rank ${k} outside [0, ${n})`);
  let lo = 0;
  let hi = n - 1;
  while (hi > lo) {
    const mid = (lo + hi) >> 1;
    // median of three into values[mid]
    if (values[mid] < values[lo]) swap(values, mid, lo);
    if (values[hi] < values[lo]) swap(values, hi, lo);
    if (values[hi] < values[mid]) swap(values, hi, mid);
    const pivot = values[mid];
    let i = lo;
    let j = hi;
    while (i <= j) {
      while (values[i] < pivot) i++;
      while (values[j] > pivot) j--;
      if (i <= j) {
        swap(values, i, j);
        i++;
        j--;
      }
    }
    if (k <= j) hi = j;
    else if (k >= i) lo = i;
    else return values[k];
  }
  return values[k];
}

function swap(a: Float32Array | Float64Array, i: number, j: number): void {
  const t = a[i];
  a[i] = a[j];
  a[j] = t;
}
