import { assertTable2x2 } from './assertTable2x2';
import { distributions } from './distributions';
import type { Table2x2 } from './types';

/** Options of {@link chiSquare2x2}. */
export interface ChiSquare2x2Options {
  /**
   * Apply Yates' continuity correction (|O − E| reduced by 0.5, never below 0).
   * @default false
   */
  readonly yates?: boolean;
}

/** Result of {@link chiSquare2x2}. */
export interface ChiSquare2x2Result {
  /** Pearson's X² (unitless). */
  readonly statistic: number;
  /** Always 1 for a 2×2 table. */
  readonly degreesOfFreedom: 1;
  /** Upper-tail probability of χ²(1) at the statistic. */
  readonly pValue: number;
  /** Expected counts under independence, same layout as the table. */
  readonly expected: [[number, number], [number, number]];
  /** Smallest expected count (rule of thumb: the χ² approximation needs ≥ 5). */
  readonly minExpected: number;
}

/**
 * Pearson's chi-square test of independence for a 2×2 table, with or without Yates' correction.
 *
 * @param table - [[a, b], [c, d]] counts
 * @param options - see {@link ChiSquare2x2Options}
 * @returns statistic, p-value and expected counts
 * @throws RangeError for invalid counts; a table with an empty row or column gives NaN statistic
 * @see F. Yates, "Contingency tables involving small numbers and the χ² test", JRSS Suppl. 1(2), 1934
 */
export function chiSquare2x2(table: Table2x2, options: ChiSquare2x2Options = {}): ChiSquare2x2Result {
  const { yates = false } = options;
  assertTable2x2(table);
  const rows = [table[0][0] + table[0][1], table[1][0] + table[1][1]];
  const cols = [table[0][0] + table[1][0], table[0][1] + table[1][1]];
  const total = rows[0] + rows[1];
  const expected: [[number, number], [number, number]] = [
    [(rows[0] * cols[0]) / total, (rows[0] * cols[1]) / total],
    [(rows[1] * cols[0]) / total, (rows[1] * cols[1]) / total],
  ];
  let statistic = 0;
  for (let i = 0; i < 2; i++) {
    for (let j = 0; j < 2; j++) {
      const dev = Math.abs(table[i][j] - expected[i][j]);
      const corrected = yates ? Math.max(0, dev - 0.5) : dev;
      statistic += (corrected * corrected) / expected[i][j];
    }
  }
  return {
    statistic,
    degreesOfFreedom: 1,
    pValue: distributions().chiSquareSurvival(statistic, 1),
    expected,
    minExpected: Math.min(...expected.flat()),
  };
}
