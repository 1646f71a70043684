import { describe, expect, it } from 'vitest';
import { laplacianOfGaussian } from '../laplacianOfGaussian';
import { snapshot } from './helpers';
import type { Raster } from '../../types';

function disk(size: number, radiusPx: number): Raster {
  const data = new Float32Array(size * size);
  const c = (size - 1) / 2;
  for (let y = 0; y < size; y++) {
    for (let x = 0; x < size; x++) if ((x - c) ** 2 + (y - c) ** 2 <= radiusPx ** 2) data[y * size + x] = 100;
  }
  return { data, width: size, height: size };
}

// both kernels: the WebAssembly SIMD one that runs by default and the JavaScript fallback
describe.each(['wasm', 'js'] as const)('laplacianOfGaussian (%s)', (implementation) => {
  it('normalised response to a disk of radius r peaks at sigma = r/√2', () => {
    // Source: docs/references.md §5 (Lindeberg 1998, IJCV 30(2):79–116; scale-normalised LoG, γ = 1): the centre
    // response ∝ (r²/σ²)·exp(−r²/2σ²) peaks at σ* = r/√2 = 7.071 px for r = 10; their discrete check found 7.10.
    // Tolerance 0.15 px: the binary disk's jagged edge and the 5-point Laplacian shift the discrete optimum
    // (7.10 in the reference's own discrete check), plus the 0.05 px scan step.
    const r = 10;
    const image = disk(81, r);
    const before = snapshot(image);
    let best = 0;
    let bestResponse = -Infinity;
    for (let sigma = 5; sigma <= 9.5; sigma += 0.05) {
      const response = laplacianOfGaussian(image, sigma, { implementation }).data[40 * 81 + 40];
      if (response > bestResponse) {
        bestResponse = response;
        best = sigma;
      }
    }
    expect(Math.abs(best - r / Math.SQRT2)).toBeLessThan(0.15);
    expect(image.data).toEqual(before);
  });

  it('without normalisation the response peaks at a smaller scale than r/√2', () => {
    // Derived from the same §5 expression divided by σ²: (r²/σ⁴)·exp(−r²/2σ²) peaks at σ = r/2 = 5 px, so
    // normalisation is what makes the optimum scale read the disk size.
    const image = disk(81, 10);
    const raw = (s: number) => laplacianOfGaussian(image, s, { scaleNormalised: false, implementation }).data[40 * 81 + 40];
    expect(raw(5)).toBeGreaterThan(raw(7.07));
  });
});
