import { describe, expect, it } from 'vitest';
import { createRng } from '../../synthetic/random';
import { binaryIntraclassCorrelation } from '../binaryIntraclassCorrelation';
import { clusteredProportion } from '../clusteredProportion';
import { compareGroups } from '../compareGroups';
import { compareSampleFractions } from '../compareSampleFractions';
import { compareSampleMedians } from '../compareSampleMedians';
import { designEffect } from '../designEffect';
import { empiricalLogit } from '../empiricalLogit';
import { mannWhitneyU } from '../mannWhitneyU';
import { welchTTest } from '../welchTTest';
import { wilsonInterval } from '../wilsonInterval';

// Student's sleep data (Cushny & Peebles 1905 via Student 1908), extra hours of sleep under drug 1 and drug 2
const DRUG1 = [0.7, -1.6, -0.2, -1.2, -0.1, 3.4, 3.7, 0.8, 0.0, 2.0];
const DRUG2 = [1.9, 0.8, 1.1, 0.1, -0.1, 4.4, 5.5, 1.6, 4.6, 3.4];

describe('welchTTest', () => {
  it("Student's sleep data: t = −1.8608, df = 17.776, p = 0.07939 (R t.test(extra ~ group, data = sleep) documented output; scipy ttest_ind(equal_var=False))", () => {
    const r = welchTTest(DRUG1, DRUG2);
    expect(r.t).toBeCloseTo(-1.8608, 4);
    expect(r.df).toBeCloseTo(17.776, 3);
    expect(r.pValue).toBeCloseTo(0.07939, 5);
    expect([r.meanA, r.meanB]).toEqual([expect.closeTo(0.75, 12), expect.closeTo(2.33, 12)]);
    // 95% interval −3.3654832 to 0.2054832: the same R output (from memory)
    expect(r.lower).toBeCloseTo(-3.3654832, 5);
    expect(r.upper).toBeCloseTo(0.2054832, 5);
  });
  it('is antisymmetric in its groups and refuses a group of one', () => {
    const ab = welchTTest(DRUG1, DRUG2);
    const ba = welchTTest(DRUG2, DRUG1);
    expect(ba.t).toBeCloseTo(-ab.t, 12);
    expect(ba.pValue).toBeCloseTo(ab.pValue, 12);
    expect(ba.lower).toBeCloseTo(-ab.upper, 12);
    expect(() => welchTTest([1], [1, 2])).toThrow(RangeError);
  });
  it('with no spread at all: the difference is known exactly', () => {
    expect(welchTTest([1, 1], [1, 1]).pValue).toBe(1);
    expect(welchTTest([2, 2], [1, 1]).pValue).toBe(0);
  });
});

describe('exact rank-sum test on per-sample values (why it is not the product test for small groups)', () => {
  // smallest two-sided p of the exact test: 2/C(8,4) = 2/70 for 4 vs 4, 2/C(6,3) = 2/20 for 3 vs 3
  // (combinatorics; scipy mannwhitneyu(method="exact"))
  it('4 vs 4 completely separated: p = 2/70 = 0.02857', () => {
    const r = mannWhitneyU([0.31, 0.35, 0.4, 0.42], [0.1, 0.12, 0.2, 0.22], { exact: true });
    expect(r.method).toBe('exact');
    expect(r.pValue).toBeCloseTo(2 / 70, 12);
  });
  it('3 vs 3 completely separated: p = 0.1, so it can never reach 0.05', () => {
    expect(mannWhitneyU([0.31, 0.35, 0.4], [0.1, 0.12, 0.2], { exact: true }).pValue).toBeCloseTo(0.1, 12);
  });
});

describe('designEffect', () => {
  it('Kish: m = 300 vesicles, ICC = 0.012 gives 1 + 299·0.012 = 4.588 (Kish 1965, Survey Sampling §5.4)', () => {
    expect(designEffect(300, 0.012)).toBeCloseTo(4.588, 12);
  });
  it('is 1 without clustering and refuses an ICC outside [0, 1]', () => {
    expect(designEffect(300, 0)).toBe(1);
    expect(() => designEffect(300, -0.1)).toThrow(RangeError);
    expect(() => designEffect(0.5, 0.1)).toThrow(RangeError);
  });
});

describe('empiricalLogit', () => {
  it('log((x + ½)/(n − x + ½)) (Cox 1970 §3.2): finite at 0 and n', () => {
    expect(empiricalLogit(81, 263)).toBeCloseTo(Math.log(81.5 / 182.5), 14);
    expect(empiricalLogit(0, 20)).toBeCloseTo(Math.log(0.5 / 20.5), 14);
    expect(empiricalLogit(20, 20)).toBeCloseTo(-empiricalLogit(0, 20), 14);
    expect(() => empiricalLogit(5, 4)).toThrow(RangeError);
  });
});

describe('binaryIntraclassCorrelation', () => {
  it('equals the one-way ANOVA ICC computed from the expanded 0/1 values (the general formula, by another route)', () => {
    const fields = [{ positive: 12, total: 40 }, { positive: 25, total: 55 }, { positive: 8, total: 31 }, { positive: 30, total: 47 }];
    const values = fields.map((f) => [...Array(f.positive).fill(1), ...Array(f.total - f.positive).fill(0)] as number[]);
    const all = values.flat();
    const grand = all.reduce((t, x) => t + x, 0) / all.length;
    const means = values.map((v) => v.reduce((t, x) => t + x, 0) / v.length);
    const ssb = values.reduce((t, v, i) => t + v.length * (means[i] - grand) ** 2, 0);
    const ssw = values.reduce((t, v, i) => t + v.reduce((u, x) => u + (x - means[i]) ** 2, 0), 0);
    const k = values.length;
    const n = all.length;
    const msb = ssb / (k - 1);
    const msw = ssw / (n - k);
    const n0 = (n - values.reduce((t, v) => t + v.length ** 2, 0) / n) / (k - 1);
    const r = binaryIntraclassCorrelation(fields)!;
    expect(r.msBetween).toBeCloseTo(msb, 12);
    expect(r.msWithin).toBeCloseTo(msw, 12);
    expect(r.iccRaw).toBeCloseTo((msb - msw) / (msb + (n0 - 1) * msw), 12);
  });
  it('recovers the ICC of beta-binomial clusters, 1/(α + β + 1) (Ridout, Demétrio & Firth 1999, Biometrics 55:137)', () => {
    // Beta(2, 7) as the 2nd smallest of 8 uniforms: ICC = 1/10, mean 2/9
    const rng = createRng(20261203);
    const fields = Array.from({ length: 600 }, () => {
      const u = Array.from({ length: 8 }, () => rng.uniform()).sort((x, y) => x - y);
      let positive = 0;
      for (let j = 0; j < 50; j++) if (rng.uniform() < u[1]) positive++;
      return { positive, total: 50 };
    });
    // standard error of the estimate at 600 clusters is about 0.01 (simulation); 0.03 is three of them
    expect(Math.abs(binaryIntraclassCorrelation(fields)!.icc - 0.1)).toBeLessThan(0.03);
  });
  it('needs two fields', () => {
    expect(binaryIntraclassCorrelation([{ positive: 3, total: 10 }])).toBeNull();
    expect(binaryIntraclassCorrelation([{ positive: 3, total: 10 }, { positive: 0, total: 0 }])).toBeNull();
  });
});

describe('clusteredProportion', () => {
  it('one field: the plain Wilson interval, 81/263 → 0.2553–0.3662 (Newcombe 1998a, Table I)', () => {
    const r = clusteredProportion([{ positive: 81, total: 263 }]);
    expect(r.designEffect).toBe(1);
    expect(r.icc).toBeNull();
    expect(r.lower).toBeCloseTo(0.2553, 4);
    expect(r.upper).toBeCloseTo(0.3662, 4);
  });
  it('fields that differ: Wilson on N / (1 + (m − 1)·ICC), wider than the naive interval', () => {
    const fields = [{ positive: 60, total: 300 }, { positive: 120, total: 300 }, { positive: 90, total: 300 }];
    const r = clusteredProportion(fields);
    const icc = binaryIntraclassCorrelation(fields)!.icc;
    expect(icc).toBeGreaterThan(0.02);
    expect(r.designEffect).toBeCloseTo(1 + 299 * icc, 12);
    expect(r.effectiveTotal).toBeCloseTo(900 / r.designEffect, 9);
    // Wilson's formula (Newcombe 1998a, method 3) written out here at the effective size
    const z = 1.959963984540054; // 97.5% normal quantile (from memory; tables give 1.96)
    const [p, n] = [0.3, r.effectiveTotal];
    const centre = (p + (z * z) / (2 * n)) / (1 + (z * z) / n);
    const half = (z * Math.sqrt((p * (1 - p)) / n + (z * z) / (4 * n * n))) / (1 + (z * z) / n);
    expect(r.lower).toBeCloseTo(centre - half, 10);
    expect(r.upper).toBeCloseTo(centre + half, 10);
    const naive = wilsonInterval(270, 900);
    expect(r.upper! - r.lower!).toBeGreaterThan(1.5 * (naive.upper - naive.lower));
    expect(r.betweenFieldSd).toBeCloseTo(0.1, 12);
  });
  it('skips fields without measured vesicles; none at all gives nulls', () => {
    expect(clusteredProportion([{ positive: 0, total: 0 }]).fraction).toBeNull();
    expect(clusteredProportion([{ positive: 81, total: 263 }, { positive: 0, total: 0 }]).fields).toBe(1);
  });
});

describe('compareSampleFractions', () => {
  const A = [{ positive: 120, total: 400 }, { positive: 200, total: 510 }, { positive: 90, total: 380 }, { positive: 150, total: 420 }];
  const B = [{ positive: 60, total: 390 }, { positive: 95, total: 450 }, { positive: 70, total: 300 }];
  it('is Welch on the per-sample empirical logits, whatever the vesicle counts', () => {
    const r = compareSampleFractions(A, B);
    const w = welchTTest(A.map((s) => empiricalLogit(s.positive, s.total)), B.map((s) => empiricalLogit(s.positive, s.total)));
    expect(r.method).toBe('welch_logit');
    expect(r.pValue).toBe(w.pValue);
    expect([r.nSamplesA, r.nSamplesB]).toEqual([4, 3]);
    expect(r.fractionA).toBeCloseTo(1 / (1 + Math.exp(-w.meanA)), 12);
    expect(r.difference).toBeCloseTo(r.fractionA! - r.fractionB!, 12);
    expect(r.ci95![0]).toBeLessThan(r.difference!);
    expect(r.ci95![1]).toBeGreaterThan(r.difference!);
  });
  it('its interval excludes 0 exactly when p < 0.05, and swapping groups mirrors it', () => {
    for (const shift of [0, 5, 10, 15, 20, 30, 40]) {
      const r = compareSampleFractions(A, B.map((s) => ({ positive: s.positive + shift, total: s.total })));
      expect(r.ci95![0] > 0 || r.ci95![1] < 0).toBe(r.pValue! < 0.05);
    }
    const ab = compareSampleFractions(A, B);
    const ba = compareSampleFractions(B, A);
    expect(ba.ci95![0]).toBeCloseTo(-ab.ci95![1], 12);
    expect(ba.pValue).toBeCloseTo(ab.pValue!, 12);
  });
  it('leaves out samples without measured vesicles and does not test a group of one', () => {
    const r = compareSampleFractions([{ positive: 5, total: 10 }, { positive: 0, total: 0 }], B);
    expect(r.nSamplesA).toBe(1);
    expect(r.method).toBe('not_tested');
    expect(r.pValue).toBeNull();
    expect(r.difference).not.toBeNull();
  });
});

describe('compareGroups', () => {
  const sample = (name: string, group: string, counts: [number, number][], d: number) =>
    ({ sample: name, group, counts: counts.map(([positive, total]) => ({ positive, total })), medianDiameterNm: d, medianHeightNm: d / 10 });
  const input = {
    groupA: 'patients', groupB: 'controls',
    outcomes: [{ key: 'CD9', label: 'CD9', kind: 'marker' as const }, { key: 'CD63', label: 'CD63', kind: 'marker' as const }],
    samples: [
      sample('P1', 'patients', [[120, 400], [40, 400]], 90), sample('P2', 'patients', [[200, 510], [50, 500]], 95),
      sample('P3', 'patients', [[90, 380], [41, 380]], 99),
      sample('C1', 'controls', [[60, 390], [40, 390]], 80), sample('C2', 'controls', [[95, 450], [44, 450]], 85),
      sample('X1', 'other', [[1, 2], [1, 2]], 1),
    ],
  };
  it('tests each outcome on its own samples and adjusts by Benjamini–Hochberg across outcomes', () => {
    const r = compareGroups(input);
    expect(r.outcomes.map((o) => [o.key, o.nSamplesA, o.nSamplesB, o.fewSamples])).toEqual([['CD9', 3, 2, true], ['CD63', 3, 2, true]]);
    const p = r.outcomes.map((o) => o.pValue!);
    // BH with m = 2: the larger p stays, the smaller becomes min(2·p, larger p)
    const [lo, hi] = [Math.min(...p), Math.max(...p)];
    expect(r.outcomes.map((o) => o.pAdjusted)).toEqual(p.map((x) => (x === hi ? hi : Math.min(2 * lo, hi))));
    expect(r.sizes.map((s) => [s.measure, s.nSamplesA, s.nSamplesB])).toEqual([['diameter_nm', 3, 2], ['height_nm', 3, 2]]);
    expect(r.sizes[0].differenceNm).toBeCloseTo((90 + 95 + 99) / 3 - 82.5, 12);
    expect(r.sizes[0].pValue).toBe(compareSampleMedians([90, 95, 99], [80, 85]).pValue);
  });
  it('refuses counts that do not match the outcomes', () => {
    expect(() => compareGroups({ ...input, samples: [sample('P1', 'patients', [[1, 2]], 3)] })).toThrow(RangeError);
  });
});
