import type { Raster } from '../../types';

/**
 * Test-only seeded random source: mulberry32 (a public-domain 32-bit generator, from memory) with Box–Muller
 * normals and a Poisson sampler. To be replaced by `synthetic/random.ts` once it exists.
 */
export interface TestRng {
  uniform(): number;
  normal(): number;
  poisson(mean: number): number;
}

export function createTestRng(seed: number): TestRng {
  let state = seed >>> 0;
  let spare: number | undefined;
  const uniform = (): number => {
    state = (state + 0x6d2b79f5) >>> 0;
    let t = state;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
  const normal = (): number => {
    if (spare !== undefined) {
      const s = spare;
      spare = undefined;
      return s;
    }
    let u = 0;
    while (u === 0) u = uniform();
    const v = uniform();
    const r = Math.sqrt(-2 * Math.log(u));
    spare = r * Math.sin(2 * Math.PI * v);
    return r * Math.cos(2 * Math.PI * v);
  };
  const poisson = (mean: number): number => {
    if (mean < 50) {
      const limit = Math.exp(-mean);
      let k = 0;
      let p = uniform();
      while (p > limit) {
        k++;
        p *= uniform();
      }
      return k;
    }
    return Math.max(0, Math.round(mean + Math.sqrt(mean) * normal()));
  };
  return { uniform, normal, poisson };
}

/** A constant raster. */
export function constantRaster(width: number, height: number, value: number): Raster {
  return { data: new Float32Array(width * height).fill(value), width, height };
}

/** Copy of a raster's data, to check later that a function left its input untouched. */
export function snapshot(raster: Raster): Float32Array {
  return Float32Array.from(raster.data);
}
