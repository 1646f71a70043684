import { AnalysisError } from '../errors';
import type { OtsuHistogramResult } from './types';

/**
 * Otsu's threshold on a histogram: the split t (bins 0..t vs t+1..) maximising the between-class
 * variance σ_B² = w₀w₁(μ₀ − μ₁)². Ties keep the first maximum.
 *
 * @param counts - histogram counts (≥ 0)
 * @param binValues - value of each bin (e.g. its centre, nm); default the bin index
 * @returns the last bin of the lower class, σ_B² (squared value units) and the class weights/means
 * @throws AnalysisError `single_class_histogram` when fewer than two bins are populated
 * @see Otsu N 1979, IEEE Trans Syst Man Cybern 9(1):62–66
 */
export function otsuHistogramThreshold(counts: ArrayLike<number>, binValues?: ArrayLike<number>): OtsuHistogramResult {
  const nbBins = counts.length;
  if (binValues && binValues.length !== nbBins) throw new RangeError(`binValues length ${binValues.length} ≠ counts length ${nbBins}`);
  const value = (i: number): number => (binValues ? binValues[i] : i);
  let total = 0;
  let sumAll = 0;
  let populated = 0;
  for (let i = 0; i < nbBins; i++) {
    if (!(counts[i] >= 0)) throw new RangeError(`count ${i} must be ≥ 0, got ${counts[i]}`);
    total += counts[i];
    sumAll += counts[i] * value(i);
    if (counts[i] > 0) populated++;
  }
  if (populated < 2) {
    throw new AnalysisError('single_class_histogram', `Otsu needs at least two populated bins, got ${populated}; the map has no contrast to split.`, { populated });
  }
  let best = -1;
  let bestT = -1;
  let bestW0 = 0;
  let bestMu0 = 0;
  let bestMu1 = 0;
  let n0 = 0;
  let sum0 = 0;
  for (let t = 0; t < nbBins - 1; t++) {
    n0 += counts[t];
    sum0 += counts[t] * value(t);
    const n1 = total - n0;
    if (n0 === 0 || n1 === 0) continue;
    const w0 = n0 / total;
    const mu0 = sum0 / n0;
    const mu1 = (sumAll - sum0) / n1;
    const sigmaB = w0 * (1 - w0) * (mu0 - mu1) * (mu0 - mu1);
    if (sigmaB > best) {
      best = sigmaB;
      bestT = t;
      bestW0 = w0;
      bestMu0 = mu0;
      bestMu1 = mu1;
    }
  }
  return { thresholdIndex: bestT, betweenClassVariance: best, w0: bestW0, mu0: bestMu0, mu1: bestMu1 };
}
