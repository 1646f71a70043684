import { wilsonInterval } from '../analysis/stats';
import type { ProportionEstimate } from './types';

/**
 * A count as a fraction of a total with its 95% Wilson score interval (null fraction when total is 0).
 *
 * @param count - positive vesicles (count)
 * @param total - vesicles analysed (count)
 * @returns the estimate
 * @throws RangeError when count is not an integer in 0…total
 */
export function estimateProportion(count: number, total: number): ProportionEstimate {
  if (total === 0) return { count, total, fraction: null, lower: null, upper: null };
  const w = wilsonInterval(count, total, 0.95);
  return { count, total, fraction: w.proportion, lower: w.lower, upper: w.upper };
}
