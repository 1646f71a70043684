import { solveLinearSystem } from './solveLinearSystem';

/**
 * Subtract from `values` their least-squares polynomial of the given degree in v = (y − yc)/sy, where y is the
 * index. Used on row offsets, whose pure-y part belongs to the background surface.
 *
 * @param values - one value per row (nm), modified in place; left unchanged when there are ≤ degree + 1 of them
 * @param degree - polynomial degree (1: line, 2: parabola)
 * @param yc - centre row
 * @param sy - scale of v (rows)
 * @see Legendre AM 1805 / Gauss CF 1809: least squares (normal equations), textbook
 */
export function removeTrend(values: Float64Array, degree: number, yc: number, sy: number): void {
  const p = degree + 1;
  const normal = new Float64Array(p * p);
  const rhs = new Float64Array(p);
  const count = values.length;
  for (let y = 0; y < count; y++) {
    const v = (y - yc) / sy;
    for (let i = 0; i < p; i++) {
      rhs[i] += values[y] * v ** i;
      for (let j = 0; j < p; j++) normal[i * p + j] += v ** (i + j);
    }
  }
  if (count <= p) return;
  const c = solveLinearSystem(normal, rhs);
  if (!c) return; // distinct rows make the system regular; kept for safety
  for (let y = 0; y < count; y++) {
    const v = (y - yc) / sy;
    let t = 0;
    for (let i = 0; i < p; i++) t += c[i] * v ** i;
    values[y] -= t;
  }
}
