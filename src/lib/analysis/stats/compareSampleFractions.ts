import { empiricalLogit } from './empiricalLogit';
import { welchTTest } from './welchTTest';
import type { FieldCount } from './types';

/** The test used: Welch on per-sample empirical logits, or none (a group has fewer than 2 samples with data). */
export type SampleFractionMethod = 'welch_logit' | 'not_tested';

/** Result of {@link compareSampleFractions}. */
export interface CompareSampleFractionsResult {
  /** Samples with at least one vesicle measured, per group (count): the unit of the comparison. */
  readonly nSamplesA: number;
  readonly nSamplesB: number;
  /** Typical sample's fraction: the back-transformed mean empirical logit (null without samples). */
  readonly fractionA: number | null;
  readonly fractionB: number | null;
  /** fractionA − fractionB (null unless both groups have a sample). */
  readonly difference: number | null;
  /** 95% interval of the difference, back-transformed from Welch's interval on the logit scale (null when not tested). */
  readonly ci95: readonly [number, number] | null;
  readonly pValue: number | null;
  readonly t: number | null;
  readonly df: number | null;
  /** Standard deviation of the per-sample empirical logits: the between-sample spread (null below 2 samples). */
  readonly sdLogitA: number | null;
  readonly sdLogitB: number | null;
  readonly method: SampleFractionMethod;
}

const expit = (x: number) => 1 / (1 + Math.exp(-x));

function sd(xs: readonly number[]): number | null {
  if (xs.length < 2) return null;
  const m = xs.reduce((t, x) => t + x, 0) / xs.length;
  return Math.sqrt(xs.reduce((t, x) => t + (x - m) ** 2, 0) / (xs.length - 1));
}

/**
 * Compares the positive fraction of two groups with the sample (donor) as the unit: each sample gives one
 * value, its empirical logit log((x + ½)/(n − x + ½)) over all its fields, and the groups' logits are
 * compared by Welch's t-test. Vesicles of one sample share its biology, so they are not independent
 * replicates; the sample's logit carries both the between-sample and the counting variation.
 *
 * The difference is reported on the fraction scale coherently with the test: with c the midpoint of the two
 * mean logits and d their difference, the difference is expit(c + d/2) − expit(c − d/2) = fractionA − fractionB,
 * and its interval is that map applied to Welch's interval of d. The map is increasing and 0 at d = 0, so the
 * interval excludes 0 exactly when p < 0.05.
 *
 * @param a - group A: positive and measured vesicles per sample (summed over its fields); samples with none measured are left out
 * @param b - group B, likewise
 * @returns the per-group typical fractions, the difference with its interval, p and the sample counts
 * @see Welch 1947; Cox 1970 (empirical logit); Lazic 2010, BMC Neurosci 11:5 (the sample as unit) (docs/references.md §7)
 */
export function compareSampleFractions(a: readonly FieldCount[], b: readonly FieldCount[]): CompareSampleFractionsResult {
  const la = a.filter((s) => s.total > 0).map((s) => empiricalLogit(s.positive, s.total));
  const lb = b.filter((s) => s.total > 0).map((s) => empiricalLogit(s.positive, s.total));
  const meanOf = (xs: number[]) => (xs.length ? xs.reduce((t, x) => t + x, 0) / xs.length : null);
  const ma = meanOf(la);
  const mb = meanOf(lb);
  const fractionA = ma === null ? null : expit(ma);
  const fractionB = mb === null ? null : expit(mb);
  const base = {
    nSamplesA: la.length, nSamplesB: lb.length, fractionA, fractionB,
    difference: fractionA === null || fractionB === null ? null : fractionA - fractionB,
    sdLogitA: sd(la), sdLogitB: sd(lb),
  };
  if (la.length < 2 || lb.length < 2) return { ...base, ci95: null, pValue: null, t: null, df: null, method: 'not_tested' };
  const w = welchTTest(la, lb);
  const c = (ma! + mb!) / 2;
  const onFractions = (d: number) => expit(c + d / 2) - expit(c - d / 2);
  return { ...base, ci95: [onFractions(w.lower), onFractions(w.upper)], pValue: w.pValue, t: w.t, df: w.df, method: 'welch_logit' };
}
