import { describe, expect, it } from 'vitest';
import { chiSquare2x2 } from '../chiSquare2x2';
import { compareProportions } from '../compareProportions';
import { fisherExact } from '../fisherExact';
import { newcombeDifference } from '../newcombeDifference';
import { wilsonInterval } from '../wilsonInterval';

// Published values are printed to 4 decimals, so the tolerance is half a unit in the 4th decimal (5e-5)
// plus a little for the z value used (1.959964): 6e-5.
const TOL4 = 6e-5;

describe('wilsonInterval', () => {
  // Newcombe 1998a, Stat Med 17:857–872, Table I, method 3 (docs/references.md §7)
  const cases: [number, number, number, number][] = [
    [81, 263, 0.2553, 0.3662],
    [15, 148, 0.0624, 0.1605],
    [0, 20, 0, 0.1611],
    [1, 29, 0.0061, 0.1718],
  ];
  for (const [k, n, lo, hi] of cases) {
    it(`${k}/${n}: ${lo}–${hi} (Newcombe 1998a Table I)`, () => {
      const r = wilsonInterval(k, n);
      expect(Math.abs(r.lower - lo)).toBeLessThan(TOL4);
      expect(Math.abs(r.upper - hi)).toBeLessThan(TOL4);
      expect(r.proportion).toBe(k / n);
    });
  }
  it('is exactly 0 at k = 0 and 1 at k = n, and widens with confidence', () => {
    expect(wilsonInterval(0, 20).lower).toBe(0);
    expect(wilsonInterval(20, 20).upper).toBe(1);
    const w95 = wilsonInterval(15, 148);
    const w99 = wilsonInterval(15, 148, 0.99);
    expect(w99.upper - w99.lower).toBeGreaterThan(w95.upper - w95.lower);
  });
  it('rejects invalid counts with RangeError', () => {
    expect(() => wilsonInterval(5, 3)).toThrow(RangeError);
    expect(() => wilsonInterval(1.5, 3)).toThrow(RangeError);
  });
});

describe('newcombeDifference (method 10)', () => {
  // Newcombe 1998b, Stat Med 17:873–890, Table II examples (a)–(f) (docs/references.md §7)
  const cases: [string, number, number, number, number, number, number][] = [
    ['a', 56, 70, 48, 80, 0.0524, 0.3339],
    ['b', 9, 10, 3, 10, 0.1705, 0.809],
    ['c', 5, 56, 0, 29, -0.0381, 0.1926],
    ['d', 6, 7, 2, 7, 0.0582, 0.8062],
    ['e', 0, 10, 0, 20, -0.1611, 0.2775],
    ['f', 10, 10, 0, 20, 0.6791, 1.0],
  ];
  for (const [label, k1, n1, k2, n2, lo, hi] of cases) {
    it(`(${label}) ${k1}/${n1} − ${k2}/${n2}: ${lo} to ${hi} (Newcombe 1998b Table II)`, () => {
      const r = newcombeDifference(k1, n1, k2, n2);
      expect(r.difference).toBeCloseTo(k1 / n1 - k2 / n2, 12);
      expect(Math.abs(r.lower - lo)).toBeLessThan(TOL4);
      expect(Math.abs(r.upper - hi)).toBeLessThan(TOL4);
    });
  }
});

describe('fisherExact', () => {
  it("tea tasting [[3,1],[1,3]]: one-sided 0.2429 (= 17/70), two-sided 0.4857, sample OR 9 (R fisher.test help, Agresti 1990 p. 61)", () => {
    const r = fisherExact([[3, 1], [1, 3]]);
    // 17/70 and 34/70 are exact hypergeometric sums; 1e-12 covers log-gamma round-off.
    expect(r.pGreater).toBeCloseTo(17 / 70, 12);
    expect(r.pTwoSided).toBeCloseTo(34 / 70, 12);
    expect(Math.abs(r.pTwoSided - 0.4857)).toBeLessThan(TOL4);
    expect(r.pLess).toBeCloseTo(69 / 70, 12); // 1 − P(X = 4) = 1 − 1/70 (hand-computed)
    expect(r.oddsRatio).toBe(9);
  });
  it('does not mutate the table and rejects bad counts', () => {
    const t = [[3, 1], [1, 3]] as const;
    const copy = JSON.stringify(t);
    fisherExact(t);
    expect(JSON.stringify(t)).toBe(copy);
    expect(() => fisherExact([[-1, 1], [1, 3]])).toThrow(RangeError);
  });
});

describe('chiSquare2x2', () => {
  it('tea table: X² = N(ad − bc)²/(r1 r2 c1 c2) = 2, Yates 0.5 (textbook shortcut formula, common practice; hand-computed)', () => {
    // p = erfc(√(X²/2)): 0.15730 at 2 and 0.47950 at 0.5 (from memory, consistent with χ²(1) tables:
    // 3.841 ↔ 0.05). Tolerance 1e-4: 5-digit recalled values.
    const plain = chiSquare2x2([[3, 1], [1, 3]]);
    expect(plain.statistic).toBeCloseTo(2, 12);
    expect(Math.abs(plain.pValue - 0.1573)).toBeLessThan(1e-4);
    const yates = chiSquare2x2([[3, 1], [1, 3]], { yates: true });
    expect(yates.statistic).toBeCloseTo(0.5, 12);
    expect(Math.abs(yates.pValue - 0.4795)).toBeLessThan(1e-4);
    expect(plain.minExpected).toBe(2);
  });
  it('Newcombe 1998b example (a) as a table: X² equals the shortcut formula and lies beyond the 5% point 3.841 of χ²(1) (statistical tables, common practice)', () => {
    const r = chiSquare2x2([[56, 14], [48, 32]]);
    const n = 150;
    const expectedStat = (n * (56 * 32 - 14 * 48) ** 2) / (70 * 80 * 104 * 46);
    expect(r.statistic).toBeCloseTo(expectedStat, 10);
    expect(r.pValue).toBeLessThan(0.05);
    expect(r.statistic).toBeGreaterThan(3.841);
  });
});

describe('compareProportions', () => {
  it('uses Fisher when an expected count is < 5 (common practice) and reports its two-sided p', () => {
    const r = compareProportions(3, 4, 1, 4);
    expect(r.test).toBe('fisher_exact');
    expect(r.pValue).toBeCloseTo(34 / 70, 12);
  });
  it('uses chi-square otherwise, with the Newcombe interval of the difference', () => {
    const r = compareProportions(56, 70, 48, 80);
    expect(r.test).toBe('chi_square');
    expect(r.pValue).toBeCloseTo(chiSquare2x2([[56, 14], [48, 32]]).pValue, 12);
    expect(Math.abs(r.differenceLower - 0.0524)).toBeLessThan(TOL4);
    expect(Math.abs(r.differenceUpper - 0.3339)).toBeLessThan(TOL4);
  });
});
