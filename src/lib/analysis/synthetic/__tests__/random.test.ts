import { describe, expect, it } from 'vitest';
import { gammaln } from 'simple-statistics';
import { createRng } from '../random';

describe('createRng', () => {
  it('is deterministic per seed and differs between seeds', () => {
    const a = createRng(42);
    const b = createRng(42);
    const c = createRng(43);
    const seqA = Array.from({ length: 20 }, () => a.uniform());
    const seqB = Array.from({ length: 20 }, () => b.uniform());
    const seqC = Array.from({ length: 20 }, () => c.uniform());
    expect(seqB).toEqual(seqA);
    expect(seqC).not.toEqual(seqA);
    for (const u of seqA) expect(u >= 0 && u < 1).toBe(true);
  });

  it('uniform draws have mean 1/2 and variance 1/12', () => {
    // U(0,1) moments: textbook. n = 100 000; tolerance 5 standard errors
    // (SE of mean = √(1/12/n) = 0.00091; SE of variance ≈ √(1/180/n) = 0.00024).
    const rng = createRng(7);
    const n = 100_000;
    let s = 0;
    let s2 = 0;
    for (let i = 0; i < n; i++) {
      const u = rng.uniform();
      s += u;
      s2 += u * u;
    }
    const mean = s / n;
    const variance = s2 / n - mean * mean;
    expect(Math.abs(mean - 0.5)).toBeLessThan(5 * 0.00091);
    expect(Math.abs(variance - 1 / 12)).toBeLessThan(5 * 0.00024);
  });

  it('normal draws have mean 0, SD 1 and 95.45% within ±2 SD', () => {
    // Standard normal facts (textbook): P(|Z| < 2) = 0.9545. n = 100 000; tolerances 5 SE:
    // mean SE 0.0032, SD SE ≈ 1/√(2n) = 0.0022, proportion SE √(0.9545·0.0455/n) = 0.00066.
    const rng = createRng(11);
    const n = 100_000;
    let s = 0;
    let s2 = 0;
    let inside = 0;
    for (let i = 0; i < n; i++) {
      const z = rng.normal();
      s += z;
      s2 += z * z;
      if (Math.abs(z) < 2) inside++;
    }
    const mean = s / n;
    expect(Math.abs(mean)).toBeLessThan(5 * 0.0032);
    expect(Math.abs(Math.sqrt(s2 / n - mean * mean) - 1)).toBeLessThan(5 * 0.0022);
    expect(Math.abs(inside / n - 0.9545)).toBeLessThan(5 * 0.00066);
  });

  it.each([3, 25, 400])('Poisson(%d) has mean = variance = λ and the Poisson pmf', (lambda) => {
    // Poisson moments and pmf p(k) = exp(k ln λ − λ − ln k!) (textbook). Both samplers are covered:
    // inversion (λ < 10) and transformed rejection (λ ≥ 10). n = 60 000; tolerances 5 SE:
    // SE(mean) = √(λ/n); SE(variance) ≈ √((2λ² + λ)/n); SE(frequency) = √(p(1−p)/n).
    const rng = createRng(1000 + lambda);
    const n = 60_000;
    let s = 0;
    let s2 = 0;
    const mode = Math.floor(lambda);
    let atMode = 0;
    let invalid = 0;
    for (let i = 0; i < n; i++) {
      const k = rng.poisson(lambda);
      if (!Number.isInteger(k) || k < 0) invalid++;
      s += k;
      s2 += k * k;
      if (k === mode) atMode++;
    }
    expect(invalid).toBe(0);
    const mean = s / n;
    const variance = s2 / n - mean * mean;
    expect(Math.abs(mean - lambda)).toBeLessThan(5 * Math.sqrt(lambda / n));
    expect(Math.abs(variance - lambda)).toBeLessThan(5 * Math.sqrt((2 * lambda * lambda + lambda) / n));
    const pMode = Math.exp(mode * Math.log(lambda) - lambda - gammaln(mode + 1));
    expect(Math.abs(atMode / n - pMode)).toBeLessThan(5 * Math.sqrt((pMode * (1 - pMode)) / n));
  });

  it('rejects a negative Poisson mean', () => {
    expect(() => createRng(1).poisson(-1)).toThrow(RangeError);
  });
});
