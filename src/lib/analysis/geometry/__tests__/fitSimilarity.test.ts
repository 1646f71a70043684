import { describe, expect, it } from 'vitest';
import type { Point } from '../../types';
import { applyAffine } from '../applyAffine';
import { fitAffine } from '../fitAffine';
import { fitSimilarity } from '../fitSimilarity';
import { similarityToAffine } from '../similarityToAffine';
import type { Similarity } from '../types';
import { createGaussian, frozenPoints } from './randomHelpers';

const AFM: Point[] = [
  { x: 12, y: 30 }, { x: 980, y: 44 }, { x: 510, y: 990 }, { x: 250, y: 260 }, { x: 760, y: 700 }, { x: 90, y: 850 },
];
const TRUE: Similarity = { scalePxPerPx: 0.482, rotationDeg: -23.5, mirrored: false, translationXPx: 40, translationYPx: 210 };
const TRUE_MIRRORED: Similarity = { ...TRUE, rotationDeg: 12.3, mirrored: true };

describe('fitSimilarity', () => {
  // 1e-9: exact data, coordinates ≤ 1000 px, double round-off ≈ 1e-13.
  it('recovers a known similarity from exact pairs (2 and 6 pairs)', () => {
    for (const n of [2, 6]) {
      const afm = frozenPoints(AFM.slice(0, n));
      const fl = frozenPoints(afm.map((p) => applyAffine(similarityToAffine(TRUE), p)));
      const fit = fitSimilarity(afm, fl);
      expect(fit.flFromAfm.scalePxPerPx).toBeCloseTo(0.482, 9);
      expect(fit.flFromAfm.rotationDeg).toBeCloseTo(-23.5, 9);
      expect(fit.flFromAfm.translationXPx).toBeCloseTo(40, 9);
      expect(fit.flFromAfm.translationYPx).toBeCloseTo(210, 9);
      expect(fit.flFromAfm.mirrored).toBe(false);
      expect(fit.rmsResidualPx).toBeLessThan(1e-9);
    }
  });

  it('solves a mirrored pairing when reflection is allowed and reports it as mirrored', () => {
    const fl = AFM.map((p) => applyAffine(similarityToAffine(TRUE_MIRRORED), p));
    const fit = fitSimilarity(AFM, fl, { allowReflection: true });
    expect(fit.flFromAfm.mirrored).toBe(true);
    expect(fit.flFromAfm.scalePxPerPx).toBeCloseTo(0.482, 9);
    expect(fit.flFromAfm.rotationDeg).toBeCloseTo(12.3, 9);
    expect(fit.rmsResidualPx).toBeLessThan(1e-9);
    // without the flag the best proper similarity cannot fit a mirror image: residuals are large
    const proper = fitSimilarity(AFM, fl);
    expect(proper.flFromAfm.mirrored).toBe(false);
    expect(proper.rmsResidualPx).toBeGreaterThan(10);
    // the affine model solves the same mirrored pairs exactly, with det < 0
    const affine = fitAffine(AFM, fl).flFromAfm;
    expect(affine[0] * affine[4] - affine[1] * affine[3]).toBeLessThan(0);
    similarityToAffine(TRUE_MIRRORED).forEach((v, i) => expect(affine[i]).toBeCloseTo(v, 9));
  });

  it('agrees with the affine fit when the noise-free map is a similarity, and has smaller spread with noise', () => {
    // With noise, the similarity has 2 fewer parameters: E[RSS] = σ²(2N − 4) vs σ²(2N − 6) (regression
    // degrees of freedom, docs/references.md §1 logic). 3000 trials, N = 6: SE of the mean RSS/σ² is √(2·8/3000) = 0.073;
    // 5% of 8 = 0.4 is 5 SE.
    const { normal } = createGaussian(99);
    const clean = AFM.map((p) => applyAffine(similarityToAffine(TRUE), p));
    let sum = 0;
    const trials = 3000;
    for (let t = 0; t < trials; t++) {
      const fl = clean.map((q) => ({ x: q.x + normal(), y: q.y + normal() }));
      sum += fitSimilarity(AFM, fl).rssPx2;
    }
    expect(Math.abs(sum / trials - 8) / 8).toBeLessThan(0.05);
  });

  it('refuses 1 pair, and 2 pairs when reflection is allowed (too_few_fiducials)', () => {
    expect(() => fitSimilarity(AFM.slice(0, 1), AFM.slice(0, 1))).toThrow(expect.objectContaining({ code: 'too_few_fiducials' }));
    expect(() => fitSimilarity(AFM.slice(0, 2), AFM.slice(0, 2), { allowReflection: true })).toThrow(
      expect.objectContaining({ code: 'too_few_fiducials' }),
    );
  });
});
