import { describe, expect, it } from 'vitest';
import { mulberry32 } from '../mulberry32';
import { createGaussian } from './randomHelpers';

describe('mulberry32 + Box–Muller', () => {
  it('is reproducible for a seed and differs between seeds', () => {
    const a = mulberry32(42);
    const b = mulberry32(42);
    const c = mulberry32(43);
    const sa = [a(), a(), a()];
    expect([b(), b(), b()]).toEqual(sa);
    expect(c()).not.toBe(sa[0]);
  });

  it('gives uniforms in [0,1) with mean 1/2 and normals with mean 0, variance 1', () => {
    // 20 000 draws: SE of the uniform mean is 0.289/√20000 = 0.002, of the normal mean 0.007,
    // of the normal variance √2/√20000 = 0.01; tolerances are ≈ 4 SE (common practice).
    const { uniform, normal } = createGaussian(7);
    const n = 20000;
    let su = 0;
    let sn = 0;
    let sn2 = 0;
    for (let i = 0; i < n; i++) {
      const u = uniform();
      expect(u >= 0 && u < 1).toBe(true);
      su += u;
      const z = normal();
      sn += z;
      sn2 += z * z;
    }
    expect(Math.abs(su / n - 0.5)).toBeLessThan(0.008);
    expect(Math.abs(sn / n)).toBeLessThan(0.03);
    expect(Math.abs(sn2 / n - 1)).toBeLessThan(0.04);
  });
});
