/** A ball-ended conical AFM tip. */
export interface BallConeTip {
  /** Apex ball radius R (nm), > 0. */
  readonly radiusNm: number;
  /** Half-angle of the cone the ball is set in (degrees), in (0, 90). */
  readonly halfAngleDeg: number;
}

/** Output of {@link tipImagedProfile}: the imaged radial height profile on a regular grid. */
export interface TipImagedProfile {
  /** Grid step of `heightsNm` (nm of radius). */
  readonly stepNm: number;
  /** Imaged height at ρ = i·stepNm (nm); the last entry is 0 (substrate). */
  readonly heightsNm: Float64Array;
}

/**
 * Radial profile of a radially symmetric surface feature as a ball-ended conical tip images it: the grey-scale
 * dilation I(ρ) = max_u [s(u) − t(|ρ − u|)] over the feature's radial line (exact for radial symmetry, because for a
 * given |u| the tip is lowest on the ray through ρ), floored by the substrate at 0. Computed numerically rather than
 * from a closed form so that test scenes do not use the formulas the analysis inverts (a′ = √(a² + 2hR) for caps,
 * docs/references.md §3, is checked against this in the tests). Written here because no installed package does
 * morphological dilation of radial profiles.
 *
 * @param surfaceNm - height of the feature's top surface at radius u (nm), for 0 ≤ u ≤ featureRadiusNm; 0 beyond
 * @param featureRadiusNm - radius of the feature's footprint (nm), > 0
 * @param tip - ball radius and cone half-angle
 * @param stepNm - radial grid step (nm). @default 0.25
 * @returns the imaged profile, out to where it meets the substrate
 * @throws RangeError for a non-positive radius or step or a half-angle outside (0, 90)
 */
export function tipImagedProfile(
  surfaceNm: (uNm: number) => number,
  featureRadiusNm: number,
  tip: BallConeTip,
  stepNm = 0.25,
): TipImagedProfile {
  const { radiusNm: R, halfAngleDeg } = tip;
  if (!(featureRadiusNm > 0) || !(R > 0) || !(stepNm > 0)) {
    throw new RangeError(`featureRadiusNm, tip radius and stepNm must be > 0, got ${featureRadiusNm}, ${R}, ${stepNm}`);
  }
  if (!(halfAngleDeg > 0 && halfAngleDeg < 90)) throw new RangeError(`tip halfAngleDeg must be in (0, 90), got ${halfAngleDeg}`);
  const alpha = (halfAngleDeg * Math.PI) / 180;
  // the cone is tangent to the ball at lateral distance R·cos α, height R(1 − sin α) above the apex
  const d0 = R * Math.cos(alpha);
  const t0 = R * (1 - Math.sin(alpha));
  const tipHeight = (d: number): number => (d <= d0 ? R - Math.sqrt(R * R - d * d) : t0 + (d - d0) / Math.tan(alpha));

  const nbU = Math.ceil(featureRadiusNm / stepNm) + 1;
  const s = new Float64Array(nbU);
  let maxHeight = 0;
  for (let j = 0; j < nbU; j++) {
    s[j] = Math.max(0, surfaceNm(Math.min(j * stepNm, featureRadiusNm)));
    if (s[j] > maxHeight) maxHeight = s[j];
  }
  // beyond the feature by more than the lateral reach of a tip as tall as the feature, the image is substrate
  const reachNm = maxHeight <= t0 ? Math.sqrt(Math.max(0, R * R - (R - maxHeight) ** 2)) : d0 + (maxHeight - t0) * Math.tan(alpha);
  const nbRho = Math.ceil((featureRadiusNm + reachNm) / stepNm) + 2;
  const heightsNm = new Float64Array(nbRho);
  for (let i = 0; i < nbRho - 1; i++) {
    const rho = i * stepNm;
    let best = 0;
    // only surface points within the tip's reach can touch it above the substrate
    const jMin = Math.max(0, Math.floor((rho - reachNm) / stepNm));
    const jMax = Math.min(nbU - 1, Math.ceil((rho + reachNm) / stepNm));
    for (let j = jMin; j <= jMax; j++) {
      const v = s[j] - tipHeight(Math.abs(rho - j * stepNm));
      if (v > best) best = v;
    }
    heightsNm[i] = best;
  }
  return { stepNm, heightsNm };
}
