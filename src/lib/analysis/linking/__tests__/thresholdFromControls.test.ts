import { describe, expect, it } from 'vitest';
import { AnalysisError } from '../../errors';
import { thresholdFromControls } from '../thresholdFromControls';

describe('thresholdFromControls', () => {
  it('reproduces the isotype example: mean 100, SD 7.348, threshold 122.05', () => {
    // Source: docs/references.md §9 "Positivity threshold" (IUPAC Gold Book L03540 form x̄ + k·s, k = 3).
    // Tolerance 0.005: the reference prints two decimals.
    const values = [100, 110, 95, 105, 90, 100, 108, 92];
    const result = thresholdFromControls(values);
    expect(result.meanCounts).toBeCloseTo(100, 10);
    expect(Math.abs(result.sdCounts - 7.348)).toBeLessThan(0.0005);
    expect(Math.abs(result.thresholdCounts - 122.05)).toBeLessThan(0.005);
    expect(values).toEqual([100, 110, 95, 105, 90, 100, 108, 92]);
  });

  it('refuses fewer than two controls with a coded error', () => {
    expect(() => thresholdFromControls([5])).toThrow(AnalysisError);
    try {
      thresholdFromControls([]);
    } catch (error) {
      expect((error as AnalysisError).code).toBe('too_few_controls');
    }
  });
});
