import { describe, expect, it } from 'vitest';
import { fitSpotGaussian } from '../fitSpotGaussian';
import { gaussianBlur } from '../gaussianBlur';

describe('fitSpotGaussian', () => {
  it('recovers a noise-free Gaussian + constant exactly', () => {
    // Analytic case: the model is sampled at pixel centres with no noise, so the least-squares minimum is the truth;
    // 1e-6 px allows for the 10⁻³ px stopping rule having been met one step before the last (quadratic convergence).
    const truth = { amplitude: 850, x: 10.37, y: 9.81, sigmaPx: 1.42, background: 96 };
    const side = 9;
    const x0 = 6;
    const y0 = 6;
    const values = new Float64Array(side * side);
    for (let j = 0; j < side; j++) {
      for (let i = 0; i < side; i++) {
        const r2 = (x0 + i - truth.x) ** 2 + (y0 + j - truth.y) ** 2;
        values[j * side + i] = truth.amplitude * Math.exp(-r2 / (2 * truth.sigmaPx ** 2)) + truth.background;
      }
    }
    const before = Float64Array.from(values);
    const fit = fitSpotGaussian(
      { values, x0, y0, width: side, height: side },
      { x: 10, y: 10, amplitude: 700, background: 90, sigmaPx: 1.3 },
      { maxIterations: 50 },
    );
    expect(fit).toBeDefined();
    expect(fit!.converged).toBe(true);
    expect(Math.abs(fit!.x - truth.x)).toBeLessThan(1e-6);
    expect(Math.abs(fit!.y - truth.y)).toBeLessThan(1e-6);
    expect(Math.abs(fit!.sigmaPx - truth.sigmaPx)).toBeLessThan(1e-6);
    expect(Math.abs(fit!.amplitude / truth.amplitude - 1)).toBeLessThan(1e-6);
    expect(Math.abs(fit!.background - truth.background)).toBeLessThan(1e-4);
    expect(values).toEqual(before);
  });
});

describe('gaussianBlur', () => {
  it.each(['wasm', 'js'] as const)('(%s) turns an impulse into the normalised sampled Gaussian and keeps a constant', (implementation) => {
    // Analytic: the response to a unit impulse is the separable kernel exp(−j²/2σ²)/Σ, Σ over |j| ≤ ceil(3σ) (the
    // documented 3σ cut), so taps sum to 1. Float32 output: 1e-7 relative.
    const size = 21;
    const sigma = 1.5;
    const data = new Float32Array(size * size);
    data[10 * size + 10] = 1;
    const out = gaussianBlur({ data, width: size, height: size }, sigma, { implementation }).data;
    const radius = Math.ceil(3 * sigma);
    let norm = 0;
    for (let j = -radius; j <= radius; j++) norm += Math.exp((-j * j) / (2 * sigma * sigma));
    const g = (j: number) => (Math.abs(j) <= radius ? Math.exp((-j * j) / (2 * sigma * sigma)) / norm : 0);
    let total = 0;
    for (let y = 0; y < size; y++) {
      for (let x = 0; x < size; x++) {
        total += out[y * size + x];
        expect(out[y * size + x]).toBeCloseTo(g(x - 10) * g(y - 10), 7);
      }
    }
    expect(total).toBeCloseTo(1, 6);
    const flat = gaussianBlur({ data: new Float32Array(15 * 4).fill(7), width: 15, height: 4 }, 2.2, { implementation }).data;
    for (const v of flat) expect(v).toBeCloseTo(7, 5);
  });
});
