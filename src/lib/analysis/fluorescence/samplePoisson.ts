import type { SceneRng } from './types';

/**
 * Draws one Poisson variate with the given mean from a seeded generator.
 *
 * Knuth's multiplication method below a mean of 50; above it, the normal approximation N(μ, μ) rounded and clipped
 * at zero, whose error in SD is below 1 % there (common practice).
 *
 * @param mean - expected count (photons), ≥ 0
 * @param rng - seeded random source
 * @returns a non-negative integer (photons)
 * @throws RangeError when mean is negative or not finite
 * @see Knuth DE. The Art of Computer Programming, vol. 2, 3rd ed., §3.4.1 (from memory).
 */
export function samplePoisson(mean: number, rng: SceneRng): number {
  if (!Number.isFinite(mean) || mean < 0) throw new RangeError(`mean must be finite and ≥ 0, got ${mean}`);
  if (mean === 0) return 0;
  if (mean < 50) {
    const limit = Math.exp(-mean);
    let k = 0;
    let p = rng.uniform();
    while (p > limit) {
      k++;
      p *= rng.uniform();
    }
    return k;
  }
  return Math.max(0, Math.round(mean + Math.sqrt(mean) * rng.normal()));
}
