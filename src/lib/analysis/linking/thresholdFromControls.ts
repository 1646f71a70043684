import { mean, sampleStandardDeviation } from 'simple-statistics';
import { AnalysisError } from '../errors';

/** Result of {@link thresholdFromControls}. */
export interface ThresholdFromControlsResult {
  /** mean + k·SD (input unit, e.g. counts). */
  readonly thresholdCounts: number;
  readonly meanCounts: number;
  /** Sample SD (n − 1) of the controls (input unit). */
  readonly sdCounts: number;
  readonly nbControls: number;
  readonly k: number;
}

/**
 * Positivity threshold from negative-control intensities (isotype, secondary-only, unstained): mean + k·SD,
 * the limit-of-detection form x̄_blank + k·s_blank. Using it for EV marker calls with k = 3 is common practice.
 *
 * @param values - control intensities (counts); not modified
 * @param k - number of SDs above the mean (dimensionless)
 * @returns the threshold and its ingredients
 * @throws AnalysisError `too_few_controls` with fewer than 2 finite values; RangeError for a negative k
 * @see IUPAC Gold Book, "limit of detection" (L03540); Armbruster DA, Pry T. Clin Biochem Rev 29 Suppl 1:S49, 2008.
 */
export function thresholdFromControls(values: readonly number[], k = 3): ThresholdFromControlsResult {
  if (!(k >= 0)) throw new RangeError(`k must be ≥ 0, got ${k}`);
  const finite = values.filter(Number.isFinite);
  if (finite.length < 2) {
    throw new AnalysisError('too_few_controls', `need at least 2 finite control values, got ${finite.length}`, {
      nbControls: finite.length,
    });
  }
  const meanCounts = mean(finite);
  const sdCounts = sampleStandardDeviation(finite);
  return { thresholdCounts: meanCounts + k * sdCounts, meanCounts, sdCounts, nbControls: finite.length, k };
}
