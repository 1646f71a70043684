import { quickselect } from 'simple-statistics';

/** Result of {@link robustNoiseSigma}. */
export interface RobustNoiseSigmaResult {
  /** Median of the sampled values (input unit). */
  readonly median: number;
  /** 1.4826 × median absolute deviation: the SD for Gaussian data, insensitive to sparse bright spots (input unit). */
  readonly sigma: number;
  /** Number of values sampled. */
  readonly nbSamples: number;
}

/**
 * Robust location and spread of a large array, from an evenly strided subsample.
 *
 * @param values - samples (any unit); not modified
 * @param maxSamples - at most this many evenly strided values are used (count)
 * @returns median and MAD-based sigma
 * @throws RangeError when values is empty
 * @see Rousseeuw PJ, Croux C. Alternatives to the median absolute deviation. JASA 88:1273–1283, 1993
 *   (the 1.4826 consistency factor).
 */
export function robustNoiseSigma(values: ArrayLike<number>, maxSamples = 262_144): RobustNoiseSigmaResult {
  const n = values.length;
  if (n === 0) throw new RangeError('values must not be empty');
  const stride = Math.max(1, Math.floor(n / maxSamples));
  const count = Math.ceil(n / stride);
  const scratch = new Float64Array(count);
  for (let i = 0, j = 0; i < n && j < count; i += stride, j++) scratch[j] = values[i];
  const mid = count >> 1;
  // quickselect is typed for number[] but only indexes and swaps, which a Float64Array supports.
  quickselect(scratch as unknown as number[], mid);
  const median = scratch[mid];
  for (let j = 0; j < count; j++) scratch[j] = Math.abs(scratch[j] - median);
  quickselect(scratch as unknown as number[], mid);
  return { median, sigma: 1.4826 * scratch[mid], nbSamples: count };
}
