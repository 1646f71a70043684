import { describe, expect, it } from 'vitest';
import { Matrix, inverse, solve } from 'ml-matrix';
import { choleskySolve } from '../choleskySolve';
import { estimateMarkerAmplitudes } from '../estimateMarkerAmplitudes';
import { renderFluorescenceScene } from '../../fluorescence/renderFluorescenceScene';
import { createTestRng } from '../../fluorescence/__tests__/helpers';

describe('choleskySolve', () => {
  it('solves the worked 3 × 3 example exactly', () => {
    // A = [[4, 12, −16], [12, 37, −43], [−16, −43, 98]] has L = [[2, 0, 0], [6, 1, 0], [−8, 5, 3]] (a standard worked
    // example of the Cholesky factorisation, e.g. Wikipedia "Cholesky decomposition"); with x = (1, −2, 3), b = A·x
    const a = [4, 12, -16, 12, 37, -43, -16, -43, 98];
    const b = [4 - 24 - 48, 12 - 74 - 129, -16 + 86 + 294];
    const x = choleskySolve(a, 3, b);
    expect(Array.from(x!)).toEqual([1, -2, 3].map((v) => expect.closeTo(v, 12)));
  });

  it('agrees with ml-matrix (LU solve and inverse) on random positive-definite systems up to 20 × 20', () => {
    // reference library: ml-matrix 6.15 solve() and inverse(); agreement to 1e-9 relative
    const rng = createTestRng(5);
    for (const n of [1, 2, 5, 12, 20]) {
      const r = new Matrix(n + 3, n);
      for (let i = 0; i < n + 3; i++) for (let j = 0; j < n; j++) r.set(i, j, rng.normal());
      const a = r.transpose().mmul(r);
      const b = Array.from({ length: n }, () => rng.normal() * 10);
      const ours = choleskySolve(a.to1DArray(), n, b)!;
      const ref = solve(a, Matrix.columnVector(b)).getColumn(0);
      const scale = Math.max(...ref.map(Math.abs));
      ref.forEach((v, i) => expect(Math.abs(ours[i] - v) / scale).toBeLessThan(1e-9));
      const identity = Matrix.eye(n).to1DArray();
      const inv = choleskySolve(a.to1DArray(), n, identity, n)!;
      const refInv = inverse(a).to1DArray();
      const invScale = Math.max(...refInv.map(Math.abs));
      refInv.forEach((v, i) => expect(Math.abs(inv[i] - v) / invScale).toBeLessThan(1e-9));
    }
  });

  it('returns null for a singular or indefinite matrix', () => {
    expect(choleskySolve([1, 1, 1, 1], 2, [1, 1])).toBeNull();
    expect(choleskySolve([1, 2, 2, 1], 2, [1, 1])).toBeNull();
  });
});

describe('estimateMarkerAmplitudes with nbQueried', () => {
  it('gives the wanted positions exactly the amplitudes of the full solve and leaves other neighbourhoods unsolved', () => {
    const rng = createTestRng(9);
    const spots = Array.from({ length: 120 }, () => ({ x: 5 + 150 * rng.uniform(), y: 5 + 150 * rng.uniform(), photons: 300 + 2000 * rng.uniform() }));
    const { raster } = renderFluorescenceScene({ widthPx: 160, heightPx: 160, sigmaPx: 1.5, spots, rng, backgroundPhotonsPerPx: 80 });
    const positions = spots.map(({ x, y }) => ({ x, y }));
    const camera = { offsetCounts: 0, gainCountsPerPhoton: 1, readNoiseCounts: 1.5 };
    const full = estimateMarkerAmplitudes(raster, positions, { sigmaPx: 1.3, camera });
    const part = estimateMarkerAmplitudes(raster, positions, { sigmaPx: 1.3, camera, nbQueried: 30 });
    for (let i = 0; i < 30; i++) {
      expect(part.amplitudes[i].amplitudeCounts).toBe(full.amplitudes[i].amplitudeCounts);
      expect(part.amplitudes[i].stdErrCounts).toBe(full.amplitudes[i].stdErrCounts);
      expect(part.amplitudes[i].unconstrainedAmplitudeCounts).toBe(full.amplitudes[i].unconstrainedAmplitudeCounts);
    }
    expect(part.nbGroups).toBeLessThan(full.nbGroups);
    expect(part.amplitudes.slice(30).some((a) => Number.isNaN(a.amplitudeCounts))).toBe(true);
  });
});
