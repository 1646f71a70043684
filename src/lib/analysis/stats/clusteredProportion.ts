import { binaryIntraclassCorrelation } from './binaryIntraclassCorrelation';
import { designEffect } from './designEffect';
import { distributions } from './distributions';
import type { FieldCount } from './types';

/** Result of {@link clusteredProportion}. */
export interface ClusteredProportionResult {
  /** Positive and total vesicles over all fields (counts). */
  readonly positive: number;
  readonly total: number;
  /** positive / total, null when no vesicle was measured. */
  readonly fraction: number | null;
  /** Wilson interval on the effective count total / designEffect (null without vesicles). */
  readonly lower: number | null;
  readonly upper: number | null;
  /** Fields with at least one vesicle measured (count). */
  readonly fields: number;
  /** Between-field intraclass correlation (ANOVA estimate ≥ 0), null with fewer than two fields. */
  readonly icc: number | null;
  /** 1 + (m − 1)·ICC with m = Σn²/Σn; 1 when the ICC cannot be estimated. */
  readonly designEffect: number;
  /** total / designEffect: as many independent vesicles as the clustered ones are worth. */
  readonly effectiveTotal: number;
  /** Standard deviation of the per-field fractions (null with fewer than two fields). */
  readonly betweenFieldSd: number | null;
}

/**
 * A sample's positive fraction over its fields, with a 95% interval that accounts for the spread between
 * fields: Wilson's score interval on Kish's effective sample size N / DE, where DE = 1 + (m − 1)·ICC, the
 * ICC estimated from the fields (ANOVA estimator) and m = Σn²/Σn the size-weighted mean field size. With a
 * single field the spread between fields is unknown and the interval is the plain Wilson interval (DE = 1).
 *
 * @param fields - positive and measured vesicles per field (counts); fields with none measured are skipped
 * @param confidence - two-sided confidence level in (0, 1)
 * @returns the pooled fraction, its clustered interval and the between-field statistics
 * @see Kish L 1965, Survey Sampling, §5.4; Newcombe 1998a, Stat Med 17:857 (Wilson; docs/references.md §7)
 */
export function clusteredProportion(fields: readonly FieldCount[], confidence = 0.95): ClusteredProportionResult {
  if (!(confidence > 0 && confidence < 1)) throw new RangeError(`confidence must be in (0, 1); got ${confidence}`);
  const est = binaryIntraclassCorrelation(fields); // validates the counts
  const used = fields.filter((f) => f.total > 0);
  const positive = used.reduce((t, f) => t + f.positive, 0);
  const total = used.reduce((t, f) => t + f.total, 0);
  if (total === 0) {
    return { positive, total, fraction: null, lower: null, upper: null, fields: 0, icc: null, designEffect: 1, effectiveTotal: 0, betweenFieldSd: null };
  }
  const m = used.reduce((t, f) => t + f.total * f.total, 0) / total;
  const de = est ? designEffect(m, est.icc) : 1;
  const nEff = total / de;
  const p = positive / total;
  // Wilson's score bounds on a possibly fractional effective n (wilsonInterval takes integer counts only)
  const z = distributions().normalQuantile(1 - (1 - confidence) / 2);
  const z2 = z * z;
  const centre = p + z2 / (2 * nEff);
  const half = z * Math.sqrt((p * (1 - p)) / nEff + z2 / (4 * nEff * nEff));
  const denom = 1 + z2 / nEff;
  const fractions = used.map((f) => f.positive / f.total);
  const meanFraction = fractions.reduce((t, x) => t + x, 0) / fractions.length;
  const betweenFieldSd = used.length > 1 ? Math.sqrt(fractions.reduce((t, x) => t + (x - meanFraction) ** 2, 0) / (used.length - 1)) : null;
  return {
    positive, total, fraction: p,
    lower: positive === 0 ? 0 : Math.max(0, (centre - half) / denom),
    upper: positive === total ? 1 : Math.min(1, (centre + half) / denom),
    fields: used.length, icc: est?.icc ?? null, designEffect: de, effectiveTotal: nEff, betweenFieldSd,
  };
}
