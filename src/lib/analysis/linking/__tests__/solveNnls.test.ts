import { Matrix, solve } from 'ml-matrix';
import { describe, expect, it } from 'vitest';
import { solveNnls } from '../solveNnls';
import { createTestRng } from '../../fluorescence/__tests__/helpers';

describe('solveNnls', () => {
  it('returns the exact solution of a consistent system with a positive answer', () => {
    // Analytic: b = A·[1, 2, 3] exactly, so the unconstrained and constrained minimisers coincide.
    // Tolerance 1e-10: QR on a well-conditioned 4×3 system loses a few digits at most.
    const a = new Matrix([[1, 2, 0], [0, 1, 1], [2, 0, 1], [1, 1, 1]]);
    const b = [5, 5, 5, 6];
    const before = a.to2DArray();
    const { x, residualNorm } = solveNnls(a, b);
    [1, 2, 3].forEach((v, j) => expect(x[j]).toBeCloseTo(v, 10));
    expect(residualNorm).toBeLessThan(1e-10);
    expect(a.to2DArray()).toEqual(before);
    expect(b).toEqual([5, 5, 5, 6]);
  });

  it('clamps at zero where the unconstrained answer is negative (hand-solved case)', () => {
    // Hand-worked: A = [[1,0],[0,1],[1,1]], b = [2,−1,1]. Unconstrained LS gives [2, −1]; with x₂ = 0 the minimum of
    // (x₁−2)² + 1 + (x₁−1)² is x₁ = 1.5, and the KKT gradient for x₂, Aᵀ(b − Ax)₂ = −1.5 ≤ 0, confirms optimality.
    const { x, passiveSet } = solveNnls(new Matrix([[1, 0], [0, 1], [1, 1]]), [2, -1, 1]);
    expect(x[0]).toBeCloseTo(1.5, 12);
    expect(x[1]).toBe(0);
    expect(passiveSet).toEqual([0]);
  });

  it('matches unconstrained least squares (ml-matrix solve) when that is feasible, and meets KKT otherwise', () => {
    // KKT conditions of NNLS (Lawson & Hanson 1974, ch. 23): x ≥ 0, w = Aᵀ(b − Ax) ≤ 0 where x = 0, w = 0 where x > 0.
    // Tolerance 1e-8 on w: QR round-off on 30×6 random systems with entries ~1.
    const rng = createTestRng(3);
    let feasibleChecked = 0;
    for (let trial = 0; trial < 40; trial++) {
      const a = Matrix.zeros(30, 6);
      for (let i = 0; i < 30; i++) for (let j = 0; j < 6; j++) a.set(i, j, rng.normal());
      // even trials: b near A·(positive x), so least squares is feasible; odd trials: arbitrary b
      const xPos = Matrix.columnVector(Array.from({ length: 6 }, () => 1 + rng.uniform()));
      const b =
        trial % 2 === 0
          ? a.mmul(xPos).to1DArray().map((v) => v + 0.1 * rng.normal())
          : Array.from({ length: 30 }, () => rng.normal() * 3);
      const { x } = solveNnls(a, b);
      const w = a.transpose().mmul(Matrix.columnVector(b).sub(a.mmul(Matrix.columnVector(Array.from(x)))));
      for (let j = 0; j < 6; j++) {
        expect(x[j]).toBeGreaterThanOrEqual(0);
        if (x[j] > 0) expect(Math.abs(w.get(j, 0))).toBeLessThan(1e-8);
        else expect(w.get(j, 0)).toBeLessThan(1e-8);
      }
      const ls = solve(a, Matrix.columnVector(b)).to1DArray();
      if (ls.every((v) => v > 0)) {
        feasibleChecked++;
        ls.forEach((v, j) => expect(x[j]).toBeCloseTo(v, 8));
      }
    }
    expect(feasibleChecked).toBeGreaterThanOrEqual(20);
  });
});
