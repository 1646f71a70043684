import type { Table2x2 } from './types';

/**
 * Checks a 2×2 table holds non-negative integer counts and is not empty.
 *
 * @param table - [[a, b], [c, d]] counts
 * @throws RangeError otherwise (programmer misuse)
 */
export function assertTable2x2(table: Table2x2): void {
  const cells = [table[0][0], table[0][1], table[1][0], table[1][1]];
  if (!cells.every((v) => Number.isInteger(v) && v >= 0) || cells.reduce((s, v) => s + v, 0) === 0) {
    throw new RangeError(`a 2×2 table needs non-negative integer counts, not all zero; got ${JSON.stringify(table)}`);
  }
}
