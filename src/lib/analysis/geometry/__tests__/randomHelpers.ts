import { mulberry32 } from '../mulberry32';

/**
 * Seeded standard normal sampler for tests: mulberry32 uniforms → Box–Muller.
 * @see G. E. P. Box, M. E. Muller, "A note on the generation of random normal deviates", Ann. Math. Stat. 29(2), 1958
 */
export function createGaussian(seed: number): { uniform: () => number; normal: () => number } {
  const uniform = mulberry32(seed);
  let spare: number | null = null;
  const normal = () => {
    if (spare !== null) {
      const s = spare;
      spare = null;
      return s;
    }
    const u1 = 1 - uniform(); // (0, 1], so log is finite
    const u2 = uniform();
    const r = Math.sqrt(-2 * Math.log(u1));
    spare = r * Math.sin(2 * Math.PI * u2);
    return r * Math.cos(2 * Math.PI * u2);
  };
  return { uniform, normal };
}

/** Deep-freezes point arrays so any mutation in the code under test throws (strict mode) */
export function frozenPoints<T extends { x: number; y: number }>(pts: T[]): readonly T[] {
  return Object.freeze(pts.map((p) => Object.freeze({ ...p })));
}
