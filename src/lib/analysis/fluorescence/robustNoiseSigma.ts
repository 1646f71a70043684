import { robustSigma } from '../heightmap/robustSigma';

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
 * Robust location and spread of a large array, from an evenly strided subsample (every ⌈n / maxSamples⌉-th value);
 * the same computation as the height map's robustSigma, which it calls.
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
  // one MAD-sigma for the whole core: the height map's exact median (the mean of the two middle values for an even
  // count), on a float64 scratch so that doubles (z-scores, SEs) are not rounded to float32 first
  const nbSampled = Math.ceil(n / Math.max(1, Math.ceil(n / maxSamples)));
  const { median, robustSigma: sigma, nbSamples } = robustSigma(values, undefined, new Float64Array(nbSampled + 1), maxSamples);
  return { median, sigma, nbSamples };
}
