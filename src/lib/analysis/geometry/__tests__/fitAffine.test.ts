import { describe, expect, it } from 'vitest';
import { AnalysisError } from '../../errors';
import type { Affine, Point } from '../../types';
import { applyAffine } from '../applyAffine';
import { composeAffine } from '../composeAffine';
import { fitAffine } from '../fitAffine';
import { invertAffine } from '../invertAffine';
import { createGaussian, frozenPoints } from './randomHelpers';

// Known maps (analytic cases, no external source needed): a general affine with rotation, unequal
// scales, shear and translation, and a mirrored one (det < 0, as from an inverted microscope).
const GENERAL: Affine = [0.47, -0.11, 35.2, 0.09, 0.5, -12.7];
const MIRRORED: Affine = [0.47, 0.11, 400.5, 0.09, -0.5, 310.2];

const AFM_10: Point[] = [
  { x: 12, y: 30 }, { x: 980, y: 44 }, { x: 510, y: 990 }, { x: 250, y: 260 }, { x: 760, y: 700 },
  { x: 90, y: 850 }, { x: 870, y: 410 }, { x: 430, y: 120 }, { x: 640, y: 560 }, { x: 333, y: 777 },
];

function expectAffineClose(actual: Affine, expected: Affine, tol: number) {
  actual.forEach((v, i) => expect(Math.abs(v - expected[i])).toBeLessThan(tol));
}

describe('fitAffine: exact pairs', () => {
  // Tolerance 1e-9: coordinates ≤ 1000 px with conditioning leave round-off near 1e-12; 1e-9 leaves margin.
  for (const n of [3, 4, 10]) {
    for (const [name, truth] of [['general', GENERAL], ['mirrored', MIRRORED]] as const) {
      it(`recovers the ${name} map from ${n} exact pairs to 1e-9`, () => {
        const afm = frozenPoints(AFM_10.slice(0, n));
        const fl = frozenPoints(afm.map((p) => applyAffine(truth, p)));
        const fit = fitAffine(afm, fl);
        expectAffineClose(fit.flFromAfm, truth, 1e-9);
        expect(fit.nbFiducials).toBe(n);
        expect(fit.rmsResidualPx).toBeLessThan(1e-9);
        // the mirrored map keeps its negative determinant
        const det = fit.flFromAfm[0] * fit.flFromAfm[4] - fit.flFromAfm[1] * fit.flFromAfm[3];
        expect(Math.sign(det)).toBe(name === 'mirrored' ? -1 : 1);
      });
    }
  }

  it('does not mutate its inputs', () => {
    const afm = AFM_10.map((p) => ({ ...p }));
    const fl = afm.map((p) => applyAffine(GENERAL, p));
    const before = JSON.stringify([afm, fl]);
    fitAffine(afm, fl);
    expect(JSON.stringify([afm, fl])).toBe(before);
  });
});

describe('invertAffine / composeAffine', () => {
  it('forward ∘ inverse = identity (1e-12: round-off of a 2×2 inverse with entries ≈ 1)', () => {
    for (const t of [GENERAL, MIRRORED]) {
      expectAffineClose(composeAffine(t, invertAffine(t)), [1, 0, 0, 0, 1, 0], 1e-12);
      expectAffineClose(composeAffine(invertAffine(t), t), [1, 0, 0, 0, 1, 0], 1e-12);
      const p = { x: 123.4, y: -56.7 };
      const back = applyAffine(invertAffine(t), applyAffine(t, p));
      expect(Math.abs(back.x - p.x) + Math.abs(back.y - p.y)).toBeLessThan(1e-10);
    }
  });

  it('composeAffine(cFromB, bFromA) applies bFromA first', () => {
    const p = { x: 7, y: -3 };
    const viaCompose = applyAffine(composeAffine(MIRRORED, GENERAL), p);
    const stepwise = applyAffine(MIRRORED, applyAffine(GENERAL, p));
    expect(viaCompose.x).toBeCloseTo(stepwise.x, 12);
    expect(viaCompose.y).toBeCloseTo(stepwise.y, 12);
  });

  it('refuses a singular map with singular_transform', () => {
    expect(() => invertAffine([1, 2, 0, 2, 4, 0])).toThrow(expect.objectContaining({ code: 'singular_transform' }));
  });
});

describe('fitAffine: refusals', () => {
  const codeOf = (fn: () => unknown) => {
    try {
      fn();
    } catch (error) {
      return error instanceof AnalysisError ? error.code : `not AnalysisError: ${String(error)}`;
    }
    return 'no error';
  };

  it('refuses collinear AFM points (degenerate_fiducials)', () => {
    const afm = [{ x: 0, y: 0 }, { x: 10, y: 10 }, { x: 20, y: 20 }, { x: 35, y: 35 }];
    const fl = [{ x: 1, y: 2 }, { x: 5, y: 9 }, { x: 8, y: 1 }, { x: 3, y: 3 }];
    expect(codeOf(() => fitAffine(afm, fl))).toBe('degenerate_fiducials');
  });

  it('refuses collinear fluorescence points (degenerate_fiducials)', () => {
    const afm = AFM_10.slice(0, 4);
    const fl = [{ x: 0, y: 5 }, { x: 10, y: 5 }, { x: 20, y: 5 }, { x: 40, y: 5 }];
    expect(codeOf(() => fitAffine(afm, fl))).toBe('degenerate_fiducials');
  });

  it('refuses a pair entered twice (duplicate_fiducials)', () => {
    const afm = [...AFM_10.slice(0, 4), AFM_10[1]];
    const fl = afm.map((p) => applyAffine(GENERAL, p));
    let caught: unknown;
    try {
      fitAffine(afm, fl);
    } catch (error) {
      caught = error;
    }
    expect(caught).toBeInstanceOf(AnalysisError);
    expect((caught as AnalysisError).code).toBe('duplicate_fiducials');
    expect((caught as AnalysisError).details).toMatchObject({ indices: [1, 4] });
  });

  it('refuses fewer than 3 pairs (too_few_fiducials) and mismatched lists (RangeError)', () => {
    expect(codeOf(() => fitAffine(AFM_10.slice(0, 2), AFM_10.slice(0, 2)))).toBe('too_few_fiducials');
    expect(() => fitAffine(AFM_10.slice(0, 4), AFM_10.slice(0, 3))).toThrow(RangeError);
  });
});

describe('fitAffine: noise statistics', () => {
  it('mean RSS over trials matches σ²(2N − 6): N = 8, σ = 1 → 10.0 (docs/references.md §1, regression degrees of freedom; Seber & Lee)', () => {
    // RSS/σ² ~ χ²(10) with variance 20; over 4000 trials the SE of the mean is √(20/4000) = 0.071,
    // so the required 5% tolerance (0.5) is 7 SE.
    const { normal } = createGaussian(2024);
    const afm = AFM_10.slice(0, 8);
    const clean = afm.map((p) => applyAffine(GENERAL, p));
    const sigma = 1;
    const trials = 4000;
    let sum = 0;
    for (let t = 0; t < trials; t++) {
      const fl = clean.map((q) => ({ x: q.x + sigma * normal(), y: q.y + sigma * normal() }));
      sum += fitAffine(afm, fl).rssPx2;
    }
    const meanRss = sum / trials;
    expect(Math.abs(meanRss - 10.0) / 10.0).toBeLessThan(0.05);
  });
});
