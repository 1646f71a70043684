import { describe, expect, it } from 'vitest';
import { AnalysisError } from '../../errors';
import { capBaseRadiusFromSlice } from '../capBaseRadiusFromSlice';
import { sphericalCap } from '../sphericalCap';
import { tipBroadenedHalfWidth } from '../tipBroadenedHalfWidth';
import { tipCorrectedBaseRadius } from '../tipCorrectedBaseRadius';

describe('sphericalCap', () => {
  it('matches the docs/references.md §2 test values for h = 20, a = 50 nm', () => {
    // Source: docs/references.md §2 "Test values" (computed from the handbook cap relations).
    // Tolerances: half a unit of the last printed digit of each reference value.
    const cap = sphericalCap(50, 20);
    expect(Math.abs(cap.sphereRadiusNm - 72.5)).toBeLessThan(0.05);
    expect(Math.abs(cap.volumeNm3 - 82728.61)).toBeLessThan(0.005);
    expect(Math.abs(cap.capAreaNm2 - 9110.62)).toBeLessThan(0.005);
    expect(Math.abs(cap.totalAreaNm2 - 16964.6)).toBeLessThan(0.005);
    expect(Math.abs(cap.contactAngleDeg - 43.603)).toBeLessThan(0.0005);
    expect(Math.abs(cap.volumeEquivalentDiameterNm - 54.061)).toBeLessThan(0.0005);
    expect(Math.abs(cap.areaConservingDiameterNm - 73.485)).toBeLessThan(0.0005);
  });

  it('gives a hemisphere (h = a = 50) volume (2/3)πr³ = 261 799.39 nm³ and θ = 90°', () => {
    // Source: docs/references.md §2 hemisphere check. Tolerance 0.005 nm³ (printed to 2 decimals); angle to 1e-9 (exact arithmetic).
    const cap = sphericalCap(50, 50);
    expect(Math.abs(cap.volumeNm3 - 261799.39)).toBeLessThan(0.005);
    expect(Math.abs(cap.volumeNm3 - (2 / 3) * Math.PI * 50 ** 3)).toBeLessThan(1e-6);
    expect(Math.abs(cap.contactAngleDeg - 90)).toBeLessThan(1e-9);
    expect(Math.abs(cap.sphereRadiusNm - 50)).toBeLessThan(1e-12);
  });

  it('agrees with sin θ = a/R_c and cos θ = 1 − h/R_c for θ ≤ 90°', () => {
    // Source: docs/references.md §2 contact-angle row (invariants for θ ≤ 90°). Tolerance 1e-12: double rounding.
    for (const [a, h] of [[50, 20], [80, 10], [30, 29]]) {
      const cap = sphericalCap(a, h);
      const theta = (cap.contactAngleDeg * Math.PI) / 180;
      expect(Math.abs(Math.sin(theta) - a / cap.sphereRadiusNm)).toBeLessThan(1e-12);
      expect(Math.abs(Math.cos(theta) - (1 - h / cap.sphereRadiusNm))).toBeLessThan(1e-12);
    }
  });

  it('rejects non-positive sizes', () => {
    expect(() => sphericalCap(0, 10)).toThrow(RangeError);
    expect(() => sphericalCap(10, -1)).toThrow(RangeError);
  });
});

describe('tip broadening', () => {
  it('matches the docs/references.md §3 cap examples', () => {
    // Source: docs/references.md §3 "Cap (θ ≤ 90°) — general form": a = 50, h = 20, R = 10 → 53.85;
    // a = 60, h = 15, R = 5 → 61.24. Tolerance 0.005 nm: values printed to 2 decimals.
    expect(Math.abs(tipBroadenedHalfWidth(50, 20, 10) - 53.85)).toBeLessThan(0.005);
    expect(Math.abs(tipBroadenedHalfWidth(60, 15, 5) - 61.24)).toBeLessThan(0.005);
  });

  it('reduces to the sphere result W = 4√(Rr) (r = 5, R = 20: half-width 20)', () => {
    // Source: docs/references.md §3 sphere row (classic geometric result; Vesenka et al. 1993 attribution from memory).
    // a = 0, h = 2r. Tolerance 1e-12: exact arithmetic.
    expect(Math.abs(tipBroadenedHalfWidth(0, 10, 20) - 20)).toBeLessThan(1e-12);
    expect(Math.abs(2 * tipBroadenedHalfWidth(0, 2 * 7, 30) - 4 * Math.sqrt(30 * 7))).toBeLessThan(1e-12);
  });

  it('correction inverts broadening, and refuses an image narrower than the tip allows', () => {
    // Invariant: a = √(w² − 2hR) undoes w = √(a² + 2hR) (docs/references.md §3). Tolerance 1e-9 nm: rounding in two square roots.
    for (const [a, h, R] of [[50, 20, 10], [60, 15, 5], [12, 30, 25]]) {
      expect(Math.abs(tipCorrectedBaseRadius(tipBroadenedHalfWidth(a, h, R), h, R) - a)).toBeLessThan(1e-9);
    }
    try {
      tipCorrectedBaseRadius(10, 20, 10);
      expect.unreachable();
    } catch (e) {
      expect(e).toBeInstanceOf(AnalysisError);
      expect((e as AnalysisError).code).toBe('tip_broadening_exceeds_width');
    }
  });
});

describe('capBaseRadiusFromSlice', () => {
  it('recovers the base radius of a cap from a slice above the substrate', () => {
    // Cap a = 50, h = 20 (R_c = 72.5, docs/references.md §2). Slice at t: r_t² = R_c² − (R_c − h + t)².
    // Tolerance 1e-9 nm: exact arithmetic.
    const Rc = 72.5;
    for (const t of [0.5, 2, 10, 19]) {
      const rt = Math.sqrt(Rc * Rc - (Rc - 20 + t) ** 2);
      expect(Math.abs(capBaseRadiusFromSlice(rt, t, 20) - 50)).toBeLessThan(1e-9);
    }
    expect(capBaseRadiusFromSlice(33, 0, 20)).toBe(33);
  });

  it('throws not_a_cap when the apex is not above the slice', () => {
    expect(() => capBaseRadiusFromSlice(10, 5, 5)).toThrowError(expect.objectContaining({ code: 'not_a_cap' }));
  });
});
