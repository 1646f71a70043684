import { describe, expect, it } from 'vitest';
import { Matrix } from 'ml-matrix';
import { solveNnls } from '../solveNnls';
import { solveNnlsNormal } from '../solveNnlsNormal';
import { createTestRng } from '../../fluorescence/__tests__/helpers';

describe('solveNnlsNormal', () => {
  it('gives the QR-based Lawson–Hanson solution from AᵀA and Aᵀb, and meets the KKT conditions', () => {
    // 20 random 60 × 8 problems with b drawn so that some variables hit the bound (Lawson & Hanson 1974, ch. 23):
    // both solvers must agree to 1e-8 relative, x ≥ 0, and the dual w = Aᵀ(b − Ax) ≤ 0 where x = 0 and ≈ 0 where x > 0
    const rng = createTestRng(77);
    for (let t = 0; t < 20; t++) {
      const a = new Matrix(60, 8);
      const b = new Float64Array(60);
      for (let i = 0; i < 60; i++) {
        for (let j = 0; j < 8; j++) a.set(i, j, rng.uniform());
        b[i] = rng.normal() * 2 + rng.uniform();
      }
      const before = a.clone();
      const at = a.transpose();
      const g = at.mmul(a);
      const h = at.mmul(Matrix.columnVector(Array.from(b))).getColumn(0);
      const normal = solveNnlsNormal(g, h).x;
      const qr = solveNnls(a, b).x;
      const scale = Math.max(...qr.map(Math.abs), 1);
      for (let j = 0; j < 8; j++) {
        expect(normal[j]).toBeGreaterThanOrEqual(0);
        expect(Math.abs(normal[j] - qr[j]) / scale).toBeLessThan(1e-8);
      }
      const w = at.mmul(Matrix.columnVector(Array.from(b)).sub(a.mmul(Matrix.columnVector(Array.from(normal))))).getColumn(0);
      for (let j = 0; j < 8; j++) {
        if (normal[j] === 0) expect(w[j]).toBeLessThan(1e-8);
        else expect(Math.abs(w[j])).toBeLessThan(1e-8);
      }
      expect(a.to2DArray()).toEqual(before.to2DArray());
    }
  });

  it('copes with two identical columns (a singular passive block) and refuses mismatched sizes', () => {
    const a = new Matrix([[1, 1, 0], [1, 1, 1], [0, 0, 1], [2, 2, 0]]);
    const b = [2, 3, 1, 4];
    const at = a.transpose();
    const { x } = solveNnlsNormal(at.mmul(a), at.mmul(Matrix.columnVector(b)).getColumn(0));
    // the fit is exact with x0 + x1 = 2 and x2 = 1, however the first two share it
    expect(x[0] + x[1]).toBeCloseTo(2, 9);
    expect(x[2]).toBeCloseTo(1, 9);
    expect(() => solveNnlsNormal(new Matrix(2, 2), [1, 2, 3])).toThrow(RangeError);
  });
});

describe('solveNnlsNormal warm start', () => {
  it('reaches the same optimum from a nearby solution, a wrong one and none (KKT conditions, Lawson & Hanson 1974)', () => {
    const rng = createTestRng(78);
    for (let t = 0; t < 20; t++) {
      const a = new Matrix(50, 7);
      const b = new Float64Array(50);
      for (let i = 0; i < 50; i++) {
        for (let j = 0; j < 7; j++) a.set(i, j, rng.uniform());
        b[i] = rng.normal() * 2 + rng.uniform();
      }
      const at = a.transpose();
      const g = at.mmul(a);
      const h = at.mmul(Matrix.columnVector(Array.from(b))).getColumn(0);
      const cold = solveNnlsNormal(g, h).x;
      const nearby = solveNnlsNormal(g, h, 1e-10, cold.map((v) => v * (1 + 0.1 * rng.normal()))).x;
      const wrong = solveNnlsNormal(g, h, 1e-10, cold.map((v) => (v > 0 ? 0 : 1))).x;
      const scale = Math.max(...cold, 1);
      for (let j = 0; j < 7; j++) {
        expect(Math.abs(nearby[j] - cold[j]) / scale).toBeLessThan(1e-9);
        expect(Math.abs(wrong[j] - cold[j]) / scale).toBeLessThan(1e-9);
      }
    }
  });
});
