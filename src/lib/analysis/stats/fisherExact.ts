import { assertTable2x2 } from './assertTable2x2';
import { distributions } from './distributions';
import type { Table2x2 } from './types';

/** Result of {@link fisherExact}. */
export interface FisherExactResult {
  /** Sum of the probabilities of all tables (same margins) no more likely than the observed one. */
  readonly pTwoSided: number;
  /** P(X ≥ a): the first row has more positives than expected (odds ratio > 1). */
  readonly pGreater: number;
  /** P(X ≤ a). */
  readonly pLess: number;
  /** Sample odds ratio a·d / (b·c) (Infinity or NaN when a product is 0). */
  readonly oddsRatio: number;
}

/**
 * Fisher's exact test for a 2×2 table, conditioning on both margins (hypergeometric distribution of
 * the top-left cell). Written here with log-probabilities, because jstat and simple-statistics have
 * no Fisher test and a direct product of factorials overflows.
 *
 * @param table - [[a, b], [c, d]] counts
 * @returns two-sided and one-sided p-values and the sample odds ratio
 * @throws RangeError for invalid counts
 * @see R. A. Fisher, The Design of Experiments, 1935 (the tea-tasting example); A. Agresti, Categorical Data Analysis, 1990
 */
export function fisherExact(table: Table2x2): FisherExactResult {
  assertTable2x2(table);
  const { logGamma } = distributions();
  const [[a, b], [c, d]] = table;
  const row1 = a + b;
  const row2 = c + d;
  const col1 = a + c;
  const total = row1 + row2;
  const lnChoose = (n: number, k: number) => logGamma(n + 1) - logGamma(k + 1) - logGamma(n - k + 1);
  const lo = Math.max(0, col1 - row2);
  const hi = Math.min(row1, col1);
  const logDenom = lnChoose(total, col1);
  const probs: number[] = [];
  for (let x = lo; x <= hi; x++) probs.push(Math.exp(lnChoose(row1, x) + lnChoose(row2, col1 - x) - logDenom));
  const observed = probs[a - lo];
  // relative tolerance so tables equal in probability are not split by round-off (common practice)
  const cut = observed * (1 + 1e-7);
  let pTwoSided = 0;
  let pGreater = 0;
  let pLess = 0;
  probs.forEach((p, i) => {
    const x = lo + i;
    if (p <= cut) pTwoSided += p;
    if (x >= a) pGreater += p;
    if (x <= a) pLess += p;
  });
  return {
    pTwoSided: Math.min(1, pTwoSided),
    pGreater: Math.min(1, pGreater),
    pLess: Math.min(1, pLess),
    oddsRatio: (a * d) / (b * c),
  };
}
