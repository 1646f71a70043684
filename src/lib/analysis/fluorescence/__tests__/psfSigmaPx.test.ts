import { describe, expect, it } from 'vitest';
import { psfSigmaPx } from '../psfSigmaPx';

describe('psfSigmaPx', () => {
  it('gives 78.0 nm = 1.2 px for 520 nm at NA 1.4 with 65 nm pixels', () => {
    // Source: docs/references.md §4, "Gaussian PSF σ" row (Zhang, Zerubia & Olivo-Marin 2007, Appl Opt 46(10):1819):
    // 520 nm at NA 1.4 gives 78.0 nm. 65 nm/px: docs/references.md §9 (6.45 µm pitch at 100×, rounded to 65).
    // Tolerance 1e-12: the formula is three floating-point operations.
    expect(psfSigmaPx(520, 1.4, 65) * 65).toBeCloseTo(78.0, 12);
    expect(psfSigmaPx(520, 1.4, 65)).toBeCloseTo(1.2, 12);
  });

  it('lies within the 0.21–0.22 λ/NA band of Gaussian fits to the Airy profile', () => {
    // Source: docs/references.md §4 — Gaussian fits to the Airy profile give 0.2059–0.2251 λ/NA; tests allow 0.21–0.22.
    const ratio = (psfSigmaPx(600, 1.2, 100) * 100 * 1.2) / 600;
    expect(ratio).toBeGreaterThanOrEqual(0.21);
    expect(ratio).toBeLessThanOrEqual(0.22);
  });

  it('rejects non-physical input', () => {
    expect(() => psfSigmaPx(520, 0, 65)).toThrow(RangeError);
    expect(() => psfSigmaPx(520, 2.5, 65)).toThrow(RangeError);
    expect(() => psfSigmaPx(Number.NaN, 1.4, 65)).toThrow(RangeError);
  });
});
