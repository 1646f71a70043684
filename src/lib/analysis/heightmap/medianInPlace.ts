import { selectKth } from './selectKth';

/** From this many values on, bracketing from a sample pays for its extra pass. */
const BRACKET_MIN_N = 8192;
/** Values in the regular sample that sets the bracket. */
const BRACKET_SAMPLE = 2048;
/** Sample ranks kept on each side of the middle, in sample standard deviations (√s/2): a miss is rarer than 1 in 10⁴. */
const BRACKET_MARGIN_SD = 4;

/**
 * Exact median of buf[0..n) (mean of the two middle values for an even count), by {@link selectKth}.
 * REORDERS buf[0..n): pass a scratch copy. Equal to the median of a full sort.
 *
 * Large sets are first narrowed as in Floyd & Rivest's SELECT: two values taken from a regular sample of 2048
 * bracket the middle rank(s) with high probability; one branch-free pass counts the values below the bracket
 * and moves those inside it (about 1/10 of them) to the front, and only those are selected. If the middle falls
 * outside the bracket (a poor sample), every value is still in buf and the whole set is selected instead.
 *
 * @param buf - scratch values (any unit); entries 0..n−1 are permuted
 * @param n - number of valid entries, 1 ≤ n ≤ buf.length
 * @returns the median of buf[0..n)
 * @throws RangeError when n is outside [1, buf.length]
 * @see Floyd RW, Rivest RL 1975, Commun ACM 18(3):165–172, "Expected time bounds for selection" (from memory)
 */
export function medianInPlace(buf: Float32Array | Float64Array, n: number): number {
  const half = n >> 1;
  const even = (n & 1) === 0;
  let len = n; // the middle rank(s) lie in buf[0..len), at half − offset
  let offset = 0;
  if (n >= BRACKET_MIN_N) {
    // same element kind as buf: selectKth then sees one kind only and stays optimised
    const sample = buf instanceof Float64Array ? new Float64Array(BRACKET_SAMPLE) : new Float32Array(BRACKET_SAMPLE);
    const step = n / BRACKET_SAMPLE;
    for (let t = 0; t < BRACKET_SAMPLE; t++) sample[t] = buf[Math.floor(t * step)];
    const centre = ((half + 0.5) * BRACKET_SAMPLE) / n;
    const margin = BRACKET_MARGIN_SD * 0.5 * Math.sqrt(BRACKET_SAMPLE) + 1;
    const hiRank = Math.min(BRACKET_SAMPLE - 1, Math.ceil(centre + margin));
    const hi = selectKth(sample, BRACKET_SAMPLE, hiRank);
    // selection leaves sample[0..hiRank) ≤ hi: the lower bound is among them
    const loRank = Math.max(0, Math.min(hiRank - 1, Math.floor(centre - margin)));
    const lo = hiRank > 0 ? selectKth(sample, hiRank, loRank) : hi;
    const counts = new Int32Array(2);
    bracket(buf, n, lo, hi, counts);
    const below = counts[0];
    const inside = counts[1];
    if (below <= (even ? half - 1 : half) && half < below + inside) {
      len = inside;
      offset = below;
    }
  }
  const k = half - offset;
  const upper = selectKth(buf, len, k);
  if (!even) return upper;
  // selection leaves buf[0..k) ≤ upper: the lower middle is their maximum (k ≥ 1 when the bracket was used)
  let lower = -Infinity;
  for (let i = 0; i < k; i++) lower = Math.max(lower, buf[i]); // Math.max: no branch to mispredict
  return (lower + upper) / 2;
}

/**
 * Count the values of buf[0..n) below lo (into counts[0]) and swap those in [lo, hi] to the front (their count
 * into counts[1]). Every value is swapped with the write position, which advances only for values inside, so the
 * set of values in buf is unchanged and the pass has no data-dependent branch.
 */
function bracket(buf: Float32Array | Float64Array, n: number, lo: number, hi: number, counts: Int32Array): void {
  let below = 0;
  let m = 0;
  for (let i = 0; i < n; i++) {
    const v = buf[i];
    below += +(v < lo);
    buf[i] = buf[m];
    buf[m] = v;
    m += +(v >= lo) & +(v <= hi);
  }
  counts[0] = below;
  counts[1] = m;
}
