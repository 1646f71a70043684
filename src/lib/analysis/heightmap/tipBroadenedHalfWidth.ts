/**
 * Apparent base half-width of a spherical cap (θ ≤ 90°) imaged with a ball-ended tip of radius R:
 * a′ = √(a² + 2hR); the height is unchanged. With a = 0 and h = 2r it gives the classic sphere
 * result, apparent width 4√(Rr).
 *
 * @param baseRadiusNm - true base radius a (nm), ≥ 0
 * @param heightNm - cap height h (nm), ≥ 0
 * @param tipRadiusNm - tip apex radius R (nm), ≥ 0
 * @returns apparent half-width (nm)
 * @throws RangeError for a negative or non-finite argument
 * @see docs/references.md §3 (cap general form; sphere case attributed to Vesenka et al. 1993, from memory)
 */
export function tipBroadenedHalfWidth(baseRadiusNm: number, heightNm: number, tipRadiusNm: number): number {
  for (const [name, v] of [['baseRadiusNm', baseRadiusNm], ['heightNm', heightNm], ['tipRadiusNm', tipRadiusNm]] as const) {
    if (!(v >= 0) || !Number.isFinite(v)) throw new RangeError(`${name} must be a finite number ≥ 0, got ${v}`);
  }
  return Math.sqrt(baseRadiusNm * baseRadiusNm + 2 * heightNm * tipRadiusNm);
}
