import { FRAME_U, surfaceRow, type SurfaceFrame } from './surfaceRow';

/** Output of {@link subtractSurfaceAndRows}. */
export interface SubtractSurfaceResult {
  /** Σ (new − previous residual)² over all pixels (nm²). */
  readonly sumShift2: number;
  /** Background samples written to the front of `samples`. */
  readonly nbSamples: number;
}

/**
 * One pass that replaces `residual` by data − surface − row offset (rounded to Float32 after each of the two
 * subtractions), sums the squared change from the previous residual, and copies every `stride`-th background
 * pixel's new residual into `samples` (the first background pixel, then every stride-th: the sample
 * {@link robustSigma} takes with the same stride). Fusing these saves three full-frame passes per levelling
 * iteration.
 *
 * @param data - heights (nm), row-major
 * @param c - surface coefficients (see {@link surfaceRow})
 * @param frame - see {@link SurfaceFrame}
 * @param rowOffsetsNm - offset of each row (nm)
 * @param residual - previous residual in, new residual out (nm)
 * @param background - 1 for background pixels, else 0 (no other values)
 * @param stride - sampling step over background pixels, ≥ 1
 * @param samples - receives the samples; length > ⌈nbBackground / stride⌉ (one spare slot)
 * @param sumShifts - false when there is no previous residual (the start): sumShift2 is then 0
 */
export function subtractSurfaceAndRows(
  data: Float32Array, width: number, height: number, c: Float64Array, frame: SurfaceFrame, rowOffsetsNm: Float64Array,
  residual: Float32Array, background: Uint8Array, stride: number, samples: Float32Array, sumShifts = true,
): SubtractSurfaceResult {
  const us = frame.subarray(FRAME_U);
  const abc = new Float64Array(3);
  const sampling = new Int32Array(2); // samples taken, countdown to the next one
  let sumShift2 = 0;
  for (let y = 0; y < height; y++) {
    surfaceRow(c, frame, y, abc);
    if (sumShifts) {
      // the running sum goes through every row in pixel order, as one loop over the frame would add it
      sumShift2 = subtractRow(data, y * width, width, abc, us, rowOffsetsNm[y], residual, background, stride, samples, sampling, sumShift2);
    } else {
      subtractRowFirst(data, y * width, width, abc, us, rowOffsetsNm[y], residual, background, stride, samples, sampling);
    }
  }
  return { sumShift2, nbSamples: sampling[0] };
}

/** The pass on one row; returns sumShift2 plus the row's shifts². One function per row so that V8 optimises it whole. */
function subtractRow(
  data: Float32Array, row: number, width: number, abc: Float64Array, us: Float64Array, off: number,
  residual: Float32Array, background: Uint8Array, stride: number, samples: Float32Array, sampling: Int32Array, sumShift2: number,
): number {
  const A = abc[0];
  const B = abc[1];
  const C = abc[2];
  let nbSamples = sampling[0];
  let skip = sampling[1];
  for (let x = 0; x < width; x++) {
    const i = row + x;
    const u = us[x];
    // the same two Float32 roundings as storing data − surface and then subtracting the offset
    const next = Math.fround(Math.fround(data[i] - (A + u * (B + C * u))) - off);
    const shift = next - residual[i];
    sumShift2 += shift * shift;
    residual[i] = next;
    // branch-free countdown sampling (see robustSigma)
    const selected = background[i];
    const take = selected & +(skip === 0);
    samples[nbSamples] = next;
    nbSamples += take;
    skip += take * stride - selected;
  }
  sampling[0] = nbSamples;
  sampling[1] = skip;
  return sumShift2;
}

/** {@link subtractRow} without the shifts: a dependent chain of one add per pixel that the start does not need. */
function subtractRowFirst(
  data: Float32Array, row: number, width: number, abc: Float64Array, us: Float64Array, off: number,
  residual: Float32Array, background: Uint8Array, stride: number, samples: Float32Array, sampling: Int32Array,
): void {
  const A = abc[0];
  const B = abc[1];
  const C = abc[2];
  let nbSamples = sampling[0];
  let skip = sampling[1];
  for (let x = 0; x < width; x++) {
    const i = row + x;
    const u = us[x];
    const next = Math.fround(Math.fround(data[i] - (A + u * (B + C * u))) - off);
    residual[i] = next;
    const selected = background[i];
    const take = selected & +(skip === 0);
    samples[nbSamples] = next;
    nbSamples += take;
    skip += take * stride - selected;
  }
  sampling[0] = nbSamples;
  sampling[1] = skip;
}
