import { describe, expect, it } from 'vitest';
import { gaussianBlur } from '../gaussianBlur';
import { gaussianHalfKernel } from '../gaussianHalfKernel';
import { laplacianOfGaussian } from '../laplacianOfGaussian';
import { gaussianBlurWasm, laplacianOfGaussianWasm, wasmSimdAvailable } from '../wasm/gaussianKernel';
import { GAUSSIAN_KERNEL_WASM_BASE64 } from '../wasm/gaussianKernelBinary';
import { createTestRng, snapshot } from './helpers';
import type { Raster } from '../../types';

/** float32 unit roundoff, 2⁻²⁴. */
const U32 = 2 ** -24;

function randomRaster(width: number, height: number, seed: number, offset = 0): Raster {
  const rng = createTestRng(seed);
  return { data: Float32Array.from({ length: width * height }, () => offset + 1000 * rng.uniform()), width, height };
}

const maxAbs = (a: Float32Array) => a.reduce((m, v) => Math.max(m, Math.abs(v)), 0);
const maxDiff = (a: Float32Array, b: Float32Array) => a.reduce((m, v, i) => Math.max(m, Math.abs(v - b[i])), 0);

/**
 * Tolerances, from the float32 rounding both kernels do (the JavaScript one keeps its horizontal pass in float32 and
 * its vertical pass in float64; the WebAssembly one is float32 throughout), M = max|input|:
 * - blur: each pass sums radius + 1 products of weights summing to 1, so it rounds at most (radius + 2) times with
 *   error ≤ u·M each; two passes plus the final float32 store: (2·(radius + 2) + 2)·u·M.
 * - LoG: the 5-point Laplacian adds 8 blurred values' worth of that error (|1| + |1| + |1| + |1| + |−4|), plus its own
 *   few roundings, times |factor| = σ²: σ²·8·(2·(radius + 2) + 3)·u·M.
 */
const blurTolerance = (radius: number, m: number) => (2 * (radius + 2) + 2) * U32 * m;
const logTolerance = (radius: number, sigma: number, m: number) => sigma * sigma * 8 * (2 * (radius + 2) + 3) * U32 * m;

const SIZES: [number, number][] = [
  [1, 1], [1, 9], [9, 1], [1, 40], [40, 1], [5, 7], [13, 3], [3, 13], [2, 2], [8, 8], [16, 5], [17, 9], [37, 29], [64, 11],
];
const SIGMAS = [0.5, 0.8, 1.2, 1.36, 1.55, 2, 3, 4];

describe('WebAssembly SIMD Gaussian kernel', () => {
  it('runs in this engine (Node ≥ 16.4 has WebAssembly SIMD), from a binary small enough to compile synchronously', () => {
    // 4096 bytes: a limit some browsers put on synchronous compilation on the main thread (from memory)
    expect(wasmSimdAvailable()).toBe(true);
    expect(atob(GAUSSIAN_KERNEL_WASM_BASE64).length).toBeLessThan(4096);
  });

  it('blur agrees with the JavaScript kernel on random images of any shape and σ 0.5–4', () => {
    let seed = 1;
    for (const [width, height] of SIZES) {
      for (const sigma of SIGMAS) {
        const image = randomRaster(width, height, seed++);
        const radius = gaussianHalfKernel(sigma).length - 1;
        const wasm = gaussianBlur(image, sigma, { implementation: 'wasm' });
        const js = gaussianBlur(image, sigma, { implementation: 'js' });
        expect([wasm.width, wasm.height, wasm.data.length]).toEqual([width, height, width * height]);
        const diff = maxDiff(wasm.data, js.data);
        if (!(diff <= blurTolerance(radius, maxAbs(image.data)))) {
          throw new Error(`blur ${width}×${height} σ=${sigma}: max |wasm − js| = ${diff}`);
        }
      }
    }
  });

  it('LoG agrees with the JavaScript kernel, normalised or not, on random images of any shape and σ 0.5–4', () => {
    let seed = 100;
    for (const [width, height] of SIZES) {
      for (const sigma of SIGMAS) {
        for (const scaleNormalised of [true, false]) {
          // an offset of 5000 makes the Laplacian a small difference of large values, the hard case for float32
          const image = randomRaster(width, height, seed++, 5000);
          const radius = gaussianHalfKernel(sigma).length - 1;
          const wasm = laplacianOfGaussian(image, sigma, { scaleNormalised, implementation: 'wasm' });
          const js = laplacianOfGaussian(image, sigma, { scaleNormalised, implementation: 'js' });
          const diff = maxDiff(wasm.data, js.data);
          const tolerance = logTolerance(radius, scaleNormalised ? sigma : 1, maxAbs(image.data));
          if (!(diff <= tolerance)) {
            throw new Error(`LoG ${width}×${height} σ=${sigma} normalised=${scaleNormalised}: max |wasm − js| = ${diff}`);
          }
        }
      }
    }
  });

  it('agrees when σ is large relative to the image (kernel wider than the frame, all taps replicated edges)', () => {
    const cases: [number, number, number][] = [[1, 1, 20], [5, 7, 6], [13, 3, 9.5], [3, 2, 40], [1, 6, 12], [9, 1, 15]];
    cases.forEach(([width, height, sigma], i) => {
      const image = randomRaster(width, height, 500 + i);
      const radius = gaussianHalfKernel(sigma).length - 1;
      const m = maxAbs(image.data);
      const blur = maxDiff(
        gaussianBlur(image, sigma, { implementation: 'wasm' }).data,
        gaussianBlur(image, sigma, { implementation: 'js' }).data,
      );
      expect(blur).toBeLessThanOrEqual(blurTolerance(radius, m));
      const log = maxDiff(
        laplacianOfGaussian(image, sigma, { implementation: 'wasm' }).data,
        laplacianOfGaussian(image, sigma, { implementation: 'js' }).data,
      );
      expect(log).toBeLessThanOrEqual(logTolerance(radius, sigma, m));
    });
    // a 1×1 frame stays itself under blur (all taps replicate it) and has a zero Laplacian
    const dot = { data: Float32Array.of(42.5), width: 1, height: 1 };
    expect(gaussianBlur(dot, 20, { implementation: 'wasm' }).data[0]).toBeCloseTo(42.5, 4);
    expect(Math.abs(laplacianOfGaussian(dot, 20, { implementation: 'wasm' }).data[0])).toBe(0);
  });

  it('leaves the input untouched and gives the same answer whatever ran before (memory reused between calls)', () => {
    const small = randomRaster(19, 11, 7);
    const before = snapshot(small);
    const first = gaussianBlurWasm(small, 1.36)!.data;
    const firstLog = laplacianOfGaussianWasm(small, 1.36, -1)!.data;
    // a larger frame with a wider kernel grows the memory and overwrites the scratch
    gaussianBlurWasm(randomRaster(301, 257, 8), 4);
    laplacianOfGaussianWasm(randomRaster(301, 257, 9), 3, -9);
    expect(gaussianBlurWasm(small, 1.36)!.data).toEqual(first);
    expect(laplacianOfGaussianWasm(small, 1.36, -1)!.data).toEqual(firstLog);
    expect(small.data).toEqual(before);
  });

  it('reads only width × height values and handles empty frames', () => {
    const image = randomRaster(6, 4, 11);
    const longer = { ...image, data: Float32Array.of(...image.data, 1e30, 1e30) };
    expect(gaussianBlurWasm(longer, 1)!.data).toEqual(gaussianBlurWasm(image, 1)!.data);
    expect(gaussianBlurWasm({ data: new Float32Array(0), width: 0, height: 5 }, 1)!.data.length).toBe(0);
  });

  it('rejects an invalid σ and data shorter than width × height with RangeError', () => {
    const image = randomRaster(4, 4, 3);
    for (const sigma of [0, -1, Number.NaN, Number.POSITIVE_INFINITY]) {
      expect(() => gaussianBlur(image, sigma)).toThrow(RangeError);
      expect(() => laplacianOfGaussian(image, sigma)).toThrow(RangeError);
    }
    expect(() => gaussianBlurWasm({ ...image, height: 5 }, 1)).toThrow(RangeError);
  });
});
