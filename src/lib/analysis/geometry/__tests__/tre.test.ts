import { describe, expect, it } from 'vitest';
import type { Affine, Point } from '../../types';
import { applyAffine } from '../applyAffine';
import { fitAffine } from '../fitAffine';
import { leaveOneOutTre } from '../leaveOneOutTre';
import { predictTre } from '../predictTre';
import { residuals } from '../residuals';
import { createGaussian, frozenPoints } from './randomHelpers';

const SQUARE: Point[] = [{ x: -50, y: -50 }, { x: 50, y: -50 }, { x: 50, y: 50 }, { x: -50, y: 50 }];
const MAP: Affine = [0.47, -0.11, 35.2, 0.09, 0.5, -12.7];

describe('residuals (FRE)', () => {
  it('gives per-pair distances in px and nm and FRE = RMS (hand-computed 3-4-5 triangles)', () => {
    const afm = [{ x: 0, y: 0 }, { x: 10, y: 0 }, { x: 0, y: 10 }, { x: 10, y: 10 }];
    const fl = [{ x: 3, y: 4 }, { x: 10, y: 0 }, { x: 0, y: 10 }, { x: 10 - 4, y: 10 + 3 }];
    const r = residuals(afm, fl, [1, 0, 0, 0, 1, 0], 100);
    expect(r.residualsPx).toEqual([5, 0, 0, 5]);
    expect(r.residualsNm).toEqual([500, 0, 0, 500]);
    expect(r.rmsResidualPx).toBeCloseTo(Math.sqrt(50 / 4), 12);
    expect(r.freNm).toBeCloseTo(100 * Math.sqrt(12.5), 10);
  });
});

describe('predictTre', () => {
  it('±50 square, affine: 0.5σ² at (0,0) and 2.5σ² at (100,0) (docs/references.md §1, OLS prediction variance)', () => {
    // Exact arithmetic: S = diag(10000, 10000), N = 4, so 2σ²(1/4 + d²/10000); tolerance is round-off only.
    const r = predictTre(SQUARE, [{ x: 0, y: 0 }, { x: 100, y: 0 }], { sigmaPx: 1 });
    expect(r.expectedTreSquaredPx2[0]).toBeCloseTo(0.5, 12);
    expect(r.expectedTreSquaredPx2[1]).toBeCloseTo(2.5, 12);
    const r3 = predictTre(SQUARE, [{ x: 100, y: 0 }], { sigmaPx: 3 });
    expect(r3.expectedTreSquaredPx2[0]).toBeCloseTo(2.5 * 9, 10);
  });

  it('matches a simulation of the square with noise on the fluorescence side (docs/references.md §1: simulated 0.499 / 2.498)', () => {
    // TRE² at a target is 0.5σ²·χ²(2)-like (variance ≈ E²); 20 000 trials give SE ≈ 0.7% of the mean,
    // so a 5% tolerance is ≈ 7 SE.
    const { normal } = createGaussian(31);
    const clean = SQUARE.map((p) => applyAffine(MAP, p));
    const targets = [{ x: 0, y: 0 }, { x: 100, y: 0 }];
    const truth = targets.map((t) => applyAffine(MAP, t));
    const sums = [0, 0];
    const trials = 20000;
    for (let i = 0; i < trials; i++) {
      const fl = clean.map((q) => ({ x: q.x + normal(), y: q.y + normal() }));
      const fit = fitAffine(SQUARE, fl).flFromAfm;
      targets.forEach((t, k) => {
        const q = applyAffine(fit, t);
        sums[k] += (q.x - truth[k].x) ** 2 + (q.y - truth[k].y) ** 2;
      });
    }
    expect(Math.abs(sums[0] / trials / 0.5 - 1)).toBeLessThan(0.05);
    expect(Math.abs(sums[1] / trials / 2.5 - 1)).toBeLessThan(0.05);
  });

  it('refuses collinear fiducials (degenerate_fiducials)', () => {
    expect(() => predictTre([{ x: 0, y: 0 }, { x: 1, y: 1 }, { x: 2, y: 2 }], [{ x: 0, y: 0 }], { sigmaPx: 1 })).toThrow(
      expect.objectContaining({ code: 'degenerate_fiducials' }),
    );
  });
});

describe('leaveOneOutTre', () => {
  const afm: Point[] = [
    { x: 12, y: 30 }, { x: 980, y: 44 }, { x: 510, y: 990 }, { x: 250, y: 260 }, { x: 760, y: 700 },
    { x: 90, y: 850 }, { x: 870, y: 410 }, { x: 430, y: 120 },
  ];

  it('equals the PRESS identity |e_i| / (1 − h_ii), with h_ii = 1/N + dᵢᵀS⁻¹dᵢ from predictTre (common practice: OLS deletion formula, from memory)', () => {
    // Tolerance 1e-9 relative: both sides are exact algebra on the same data, only round-off differs.
    const { normal } = createGaussian(5);
    const fl = frozenPoints(afm.map((p) => applyAffine(MAP, p)).map((q) => ({ x: q.x + normal(), y: q.y + normal() })));
    const fit = fitAffine(afm, fl);
    const lev = predictTre(afm, afm, { sigmaPx: Math.SQRT1_2 }).expectedTreSquaredPx2; // 2·½·h = h
    const loo = leaveOneOutTre(frozenPoints(afm), fl, { flPixelNm: 65 });
    loo.trePx.forEach((t, i) => {
      const press = fit.residualsPx[i] / (1 - lev[i]);
      expect(Math.abs((t as number) / press - 1)).toBeLessThan(1e-9);
      expect(loo.treNm[i]).toBeCloseTo(65 * (t as number), 9);
    });
  });

  it('is consistent with the predicted TRE: E[LOO²_i] = E[TRE²] of the fit without i at p_i + 2σ² (docs/references.md §1)', () => {
    // The held-out fluorescence point carries its own noise (2σ²), hence the added term.
    // 3000 trials of N = 8: each LOO² has SD ≈ its mean, SE ≈ 1.8%; tolerance 7% on the average over points (≈ 4 SE per point, tighter in the mean).
    const { normal } = createGaussian(77);
    const clean = afm.map((p) => applyAffine(MAP, p));
    const trials = 3000;
    const sums = afm.map(() => 0);
    for (let t = 0; t < trials; t++) {
      const fl = clean.map((q) => ({ x: q.x + normal(), y: q.y + normal() }));
      leaveOneOutTre(afm, fl).trePx.forEach((v, i) => (sums[i] += (v as number) ** 2));
    }
    afm.forEach((p, i) => {
      const others = afm.filter((_, j) => j !== i);
      const expected = predictTre(others, [p], { sigmaPx: 1 }).expectedTreSquaredPx2[0] + 2;
      expect(Math.abs(sums[i] / trials / expected - 1)).toBeLessThan(0.07);
    });
  });

  it('needs at least 4 pairs for the affine model (too_few_fiducials)', () => {
    expect(() => leaveOneOutTre(SQUARE.slice(0, 3), SQUARE.slice(0, 3))).toThrow(
      expect.objectContaining({ code: 'too_few_fiducials' }),
    );
  });
});
