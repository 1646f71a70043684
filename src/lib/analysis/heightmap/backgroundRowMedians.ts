import { medianInPlace } from './medianInPlace';
import { selectKth } from './selectKth';
import { FRAME_U, surfaceRow, type SurfaceFrame } from './surfaceRow';

/**
 * Median of each row of data − surface, over the row's background pixels when a mask is given (the whole row
 * when it has fewer than `minBackgroundPerRow` of them), else over every other pixel of the row. The residual is
 * computed row by row and never stored as a frame.
 *
 * With guesses (`out` holding the medians of an earlier pass, against the surface `guessFrom`), each guess is
 * moved by the change of the surface along its row, and the pass that computes the row's residuals also counts
 * those below the bracket guess ± halfWidthNm and collects those inside it (branch-free). When the middle rank(s)
 * fall inside, only those few values go through selection; otherwise the row's values are selected as they are.
 * Either way the result is the exact median. Arguments are arrays and numbers only (see {@link SurfaceFrame}).
 *
 * @param data - heights (nm), row-major
 * @param c - surface coefficients (see {@link surfaceRow})
 * @param frame - see {@link SurfaceFrame}
 * @param background - 1 for background pixels, else 0; null for the sparse whole-row start
 * @param minBackgroundPerRow - below this many background pixels the whole row is used
 * @param guessFrom - coefficients of the surface the medians in `out` were taken against, or null for no guesses
 * @param halfWidthNm - half-width of the bracket around each guess (nm)
 * @param scratch - Float32Array of length ≥ 2·width (a row's values, then the values inside the bracket)
 * @param out - medians of the earlier pass in when guessing (each read before its row is written), one median per
 *   row out (nm)
 * @returns the number of rows whose median came from the bracket
 * @see Floyd RW, Rivest RL 1975, Commun ACM 18(3):165–172 (selection inside a bracket of the wanted rank; from memory)
 */
export function backgroundRowMedians(
  data: Float32Array, width: number, height: number, c: Float64Array, frame: SurfaceFrame,
  background: Uint8Array | null, minBackgroundPerRow: number, guessFrom: Float64Array | null, halfWidthNm: number,
  scratch: Float32Array, out: Float64Array,
): number {
  // Float32 like every buffer given to selectKth: one element kind keeps it optimised
  const rowBuf = scratch.subarray(0, width);
  const inBracket = scratch.subarray(width, 2 * width);
  const us = frame.subarray(FRAME_U);
  const guess = guessFrom !== null && background !== null;
  const abc = new Float64Array(3);
  const abcBefore = new Float64Array(3);
  const counts = new Int32Array(2); // values below the bracket, values inside it
  let nbBracketed = 0;
  for (let y = 0; y < height; y++) {
    surfaceRow(c, frame, y, abc);
    const row = y * width;
    if (!background) {
      // robust while particles cover less than half a row; every other pixel is enough for a starting point
      out[y] = medianInPlace(rowBuf, gatherSparseResidualRow(data, row, width, y & 1, abc, us, rowBuf));
      continue;
    }
    let lo = 0;
    let hi = 0;
    if (guess) {
      // the surface change along the row, averaged over u ∈ [−1, 1] (mean u = 0, mean u² = 1/3)
      surfaceRow(guessFrom, frame, y, abcBefore);
      const g = out[y] + (abcBefore[0] - abc[0]) + (abcBefore[2] - abc[2]) / 3;
      lo = g - halfWidthNm;
      hi = g + halfWidthNm;
    }
    const m = guess
      ? bracketResidualRow(data, row, width, abc, us, background, lo, hi, inBracket, counts)
      : gatherResidualRow(data, row, width, abc, us, background, rowBuf);
    if (m < minBackgroundPerRow) {
      // too little background in this row: fall back to the whole row
      out[y] = medianInPlace(rowBuf, gatherResidualRow(data, row, width, abc, us, null, rowBuf));
      continue;
    }
    const k = m >> 1;
    const below = counts[0];
    const inside = counts[1];
    const even = (m & 1) === 0;
    if (guess && below <= (even ? k - 1 : k) && k < below + inside) {
      nbBracketed++;
      const upper = selectKth(inBracket, inside, k - below);
      if (!even) {
        out[y] = upper;
        continue;
      }
      // selection leaves inBracket[0..k − below) ≤ upper; the lower middle is their maximum (k − below ≥ 1)
      let lower = -Infinity;
      for (let i = 0; i < k - below; i++) lower = Math.max(lower, inBracket[i]);
      out[y] = (lower + upper) / 2;
    } else {
      // no guess, or it missed: select among all the row's values (gathered again after a miss)
      if (guess) gatherResidualRow(data, row, width, abc, us, background, rowBuf);
      out[y] = medianInPlace(rowBuf, m);
    }
  }
  return nbBracketed;
}

/**
 * rowBuf[0..m) = data − surface (Float32) over the row's background pixels (all pixels when `background` is
 * null); returns m. Every value is written and the position advances by the mask value, so the loop has no
 * data-dependent branch. One function per row so that V8 optimises it whole (see fitSurface's rowSums).
 */
function gatherResidualRow(
  data: Float32Array, row: number, width: number, abc: Float64Array, us: Float64Array, background: Uint8Array | null, rowBuf: Float32Array,
): number {
  const A = abc[0];
  const B = abc[1];
  const C = abc[2];
  if (!background) {
    for (let x = 0; x < width; x++) {
      const u = us[x];
      rowBuf[x] = data[row + x] - (A + u * (B + C * u));
    }
    return width;
  }
  let m = 0;
  for (let x = 0; x < width; x++) {
    const u = us[x];
    rowBuf[m] = data[row + x] - (A + u * (B + C * u));
    m += background[row + x];
  }
  return m;
}

/**
 * Over the row's background pixels of data − surface (Float32): counts those below lo into counts[0] and copies
 * those in [lo, hi] to the front of inBracket, their count into counts[1]; returns the number of background
 * pixels. Branch-free like {@link gatherResidualRow} (`+(cond)` compiles without a jump).
 */
function bracketResidualRow(
  data: Float32Array, row: number, width: number, abc: Float64Array, us: Float64Array, background: Uint8Array,
  lo: number, hi: number, inBracket: Float32Array, counts: Int32Array,
): number {
  const A = abc[0];
  const B = abc[1];
  const C = abc[2];
  let m = 0;
  let below = 0;
  let inside = 0;
  for (let x = 0; x < width; x++) {
    const u = us[x];
    const v = Math.fround(data[row + x] - (A + u * (B + C * u)));
    const b = background[row + x];
    m += b;
    below += b & +(v < lo);
    inBracket[inside] = v;
    inside += b & +(v >= lo) & +(v <= hi);
  }
  counts[0] = below;
  counts[1] = inside;
  return m;
}

/** rowBuf[0..m) = data − surface at every other pixel of the row, from column x0; returns m. */
function gatherSparseResidualRow(
  data: Float32Array, row: number, width: number, x0: number, abc: Float64Array, us: Float64Array, rowBuf: Float32Array,
): number {
  const A = abc[0];
  const B = abc[1];
  const C = abc[2];
  let m = 0;
  for (let x = x0; x < width; x += 2) {
    const u = us[x];
    rowBuf[m++] = data[row + x] - (A + u * (B + C * u));
  }
  return m;
}
