import { describe, expect, it } from 'vitest';
import { warmUpAnalysis } from '../warmUpAnalysis';

describe('warmUpAnalysis', () => {
  it('analyses its invented field: every one of the 20 vesicles inside the height map is found, beads apart', () => {
    // the scene places 20 vesicles in the AFM field (makeCorrelativeScene); a warm-up that silently failed would
    // leave the worker cold without a word, so the count is checked
    expect(warmUpAnalysis(1)).toBe(20);
  });

  it('refuses a round count that is not a whole number ≥ 1', () => {
    expect(() => warmUpAnalysis(0)).toThrow(RangeError);
    expect(() => warmUpAnalysis(1.5)).toThrow(RangeError);
  });
});
