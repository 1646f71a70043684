import { describe, expect, it } from 'vitest';
import { benjaminiHochberg } from '../benjaminiHochberg';
import { mannWhitneyU } from '../mannWhitneyU';

// Hollander & Wolfe (1973) p. 69 permeability data, as in R's wilcox.test example (docs/references.md §7).
const X = [0.8, 0.83, 1.89, 1.04, 1.45, 1.38, 1.91, 1.64, 0.73, 1.46];
const Y = [1.15, 0.88, 0.9, 0.74, 1.21];
// Values printed to 4 decimals: tolerance 6e-5 (half a unit in the last place plus margin).
const TOL4 = 6e-5;

describe('mannWhitneyU', () => {
  it('Hollander & Wolfe p. 69: U = 35, exact p greater 0.1272, two-sided 0.2544 (R wilcox.test example)', () => {
    const g = mannWhitneyU(X, Y, { alternative: 'greater' });
    expect(g.uStatistic).toBe(35);
    expect(g.method).toBe('exact');
    expect(Math.abs(g.pValue - 0.1272)).toBeLessThan(TOL4);
    const t = mannWhitneyU(X, Y);
    expect(Math.abs(t.pValue - 0.2544)).toBeLessThan(TOL4);
  });

  it('same data, normal approximation: 0.1103 / 0.2207 without and 0.1223 / 0.2446 with continuity correction (docs/references.md §7, scipy)', () => {
    const opts = { exact: false } as const;
    expect(Math.abs(mannWhitneyU(X, Y, { ...opts, continuityCorrection: false, alternative: 'greater' }).pValue - 0.1103)).toBeLessThan(TOL4);
    expect(Math.abs(mannWhitneyU(X, Y, { ...opts, continuityCorrection: false }).pValue - 0.2207)).toBeLessThan(TOL4);
    expect(Math.abs(mannWhitneyU(X, Y, { ...opts, alternative: 'greater' }).pValue - 0.1223)).toBeLessThan(TOL4);
    expect(Math.abs(mannWhitneyU(X, Y, opts).pValue - 0.2446)).toBeLessThan(TOL4);
  });

  it('is antisymmetric: U_a + U_b = n_a·n_b, and "less" for (b, a) equals "greater" for (a, b)', () => {
    const ab = mannWhitneyU(X, Y, { alternative: 'greater' });
    const ba = mannWhitneyU(Y, X, { alternative: 'less' });
    expect(ab.uStatistic + ba.uStatistic).toBe(50);
    expect(ba.pValue).toBeCloseTo(ab.pValue, 12);
  });

  it('with ties: mid-ranks, tie-corrected variance, normal method (hand-computed)', () => {
    // a = [1, 2, 2], b = [2, 3]: ranks 1, 3, 3 | 3, 5 → R_a = 7, U = 7 − 6 = 1.
    // Tie term Σ(t³ − t) = 24 (three 2s); var = (6/12)·(6 − 24/20) = 2.4; z (no correction) = (1 − 3)/√2.4.
    const r = mannWhitneyU([1, 2, 2], [2, 3], { continuityCorrection: false });
    expect(r.uStatistic).toBe(1);
    expect(r.hasTies).toBe(true);
    expect(r.method).toBe('normal');
    expect(r.z as number).toBeCloseTo(-2 / Math.sqrt(2.4), 12);
  });

  it('exact distribution sums to 1 and gives p = 1/C(n_a+n_b, n_a) at the extreme (combinatorics)', () => {
    const r = mannWhitneyU([10, 11, 12], [1, 2, 3, 4], { alternative: 'greater' });
    expect(r.uStatistic).toBe(12);
    expect(r.pValue).toBeCloseTo(1 / 35, 14);
  });
});

describe('benjaminiHochberg', () => {
  // Benjamini & Hochberg (1995) JRSS B 57:289 worked example; adjusted values as from scipy
  // false_discovery_control (docs/references.md §7). Printed to ≤ 4 decimals: tolerance 6e-5.
  const P = [0.0001, 0.0004, 0.0019, 0.0095, 0.0201, 0.0278, 0.0298, 0.0344, 0.0459, 0.324, 0.4262, 0.5719, 0.6528, 0.759, 1.0];
  const ADJ = [0.0015, 0.003, 0.0095, 0.0356, 0.0603, 0.0639, 0.0639, 0.0645, 0.0765, 0.486, 0.5812, 0.7149, 0.7532, 0.8132, 1];

  it('matches the published adjusted p-values and rejects 4 at q = 0.05', () => {
    const adj = benjaminiHochberg(P);
    adj.forEach((q, i) => expect(Math.abs(q - ADJ[i])).toBeLessThan(TOL4));
    expect(adj.filter((q) => q <= 0.05)).toHaveLength(4);
  });

  it('keeps the input order, is monotone in p and leaves the input unchanged', () => {
    const shuffled = [P[7], P[0], P[14], P[3], P[9], P[1]];
    const copy = [...shuffled];
    const adj = benjaminiHochberg(shuffled);
    expect(shuffled).toEqual(copy);
    const pairs = shuffled.map((p, i) => [p, adj[i]]).sort((x, y) => x[0] - y[0]);
    for (let i = 1; i < pairs.length; i++) expect(pairs[i][1]).toBeGreaterThanOrEqual(pairs[i - 1][1]);
    // m = 6 here: smallest p 0.0001 → 6·0.0001/1 = 0.0006 (hand-computed)
    expect(adj[1]).toBeCloseTo(0.0006, 15);
  });
});
