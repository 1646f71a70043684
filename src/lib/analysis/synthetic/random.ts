import { gammaln } from 'simple-statistics';
import { mulberry32 } from '../geometry/mulberry32';

/** A seeded pseudo-random source. Every draw advances one shared 32-bit state. */
export interface Rng {
  /** Uniform draw in [0, 1). */
  uniform(): number;
  /** Standard normal draw (mean 0, SD 1), Box–Muller transform. */
  normal(): number;
  /**
   * Poisson draw with the given mean (counts).
   * @param mean - expected count, ≥ 0 and finite
   * @throws RangeError when mean is negative or not finite
   */
  poisson(mean: number): number;
}

const POISSON_INVERSION_MAX_MEAN = 10;

/**
 * Create a deterministic random source from a 32-bit seed (mulberry32 generator), with
 * normal (Box–Muller) and Poisson draws (inversion for mean < 10, transformed rejection above).
 * The core must never use Math.random, so every synthetic scene takes one of these. Written here because
 * none of the installed packages offers a seeded generator.
 *
 * @param seed - any integer; only its low 32 bits are used
 * @returns a fresh generator; two generators with the same seed give identical sequences
 * @see Box GEP, Muller ME 1958, Ann Math Stat 29:610–611 (normal deviates)
 * @see Hörmann W 1993, Insurance: Mathematics and Economics 12:39–45 (PTRS Poisson sampler; constants from memory)
 */
export function createRng(seed: number): Rng {
  if (!Number.isFinite(seed)) throw new RangeError(`seed must be a finite number, got ${seed}`);
  let spareNormal = Number.NaN;
  const uniform = mulberry32(seed);

  const normal = (): number => {
    if (!Number.isNaN(spareNormal)) {
      const z = spareNormal;
      spareNormal = Number.NaN;
      return z;
    }
    const u1 = 1 - uniform(); // (0, 1], so the log is finite
    const u2 = uniform();
    const radius = Math.sqrt(-2 * Math.log(u1));
    spareNormal = radius * Math.sin(2 * Math.PI * u2);
    return radius * Math.cos(2 * Math.PI * u2);
  };

  const poisson = (mean: number): number => {
    if (!(mean >= 0) || !Number.isFinite(mean)) {
      throw new RangeError(`Poisson mean must be a finite number ≥ 0, got ${mean}`);
    }
    if (mean === 0) return 0;
    if (mean < POISSON_INVERSION_MAX_MEAN) {
      // sequential inversion of the cumulative distribution
      let k = 0;
      let p = Math.exp(-mean);
      let cumulative = p;
      const u = uniform();
      while (u > cumulative && p > 0) {
        k += 1;
        p *= mean / k;
        cumulative += p;
      }
      return k;
    }
    // transformed rejection with squeeze (PTRS)
    const sqrtMean = Math.sqrt(mean);
    const logMean = Math.log(mean);
    const b = 0.931 + 2.53 * sqrtMean;
    const a = -0.059 + 0.02483 * b;
    const invAlpha = 1.1239 + 1.1328 / (b - 3.4);
    const vr = 0.9277 - 3.6224 / (b - 2);
    for (;;) {
      const u = uniform() - 0.5;
      const v = uniform();
      const us = 0.5 - Math.abs(u);
      const k = Math.floor(((2 * a) / us + b) * u + mean + 0.43);
      if (us >= 0.07 && v <= vr) return k;
      if (k < 0 || (us < 0.013 && v > us)) continue;
      const lhs = Math.log(v) + Math.log(invAlpha) - Math.log(a / (us * us) + b);
      if (lhs <= -mean + k * logMean - gammaln(k + 1)) return k;
    }
  };

  return { uniform, normal, poisson };
}
