/**
 * Standard deviation of the Gaussian that approximates a wide-field, paraxial point-spread function, in pixels.
 *
 * σ = 0.21·λ/NA, divided by the pixel size in the sample plane.
 *
 * @param emissionNm - emission wavelength λ (nm), e.g. 520
 * @param numericalAperture - objective numerical aperture NA (dimensionless), e.g. 1.4
 * @param pixelSizeNm - pixel size in the sample plane, camera pitch / magnification (nm)
 * @returns the PSF sigma (px)
 * @throws RangeError when a value is not a finite positive number or NA exceeds 1.7
 * @see Zhang B, Zerubia J, Olivo-Marin J-C. Gaussian approximations of fluorescence microscope
 *   point-spread function models. Applied Optics 46(10):1819–1829, 2007.
 */
export function psfSigmaPx(emissionNm: number, numericalAperture: number, pixelSizeNm: number): number {
  for (const [name, value] of [
    ['emissionNm', emissionNm],
    ['numericalAperture', numericalAperture],
    ['pixelSizeNm', pixelSizeNm],
  ] as const) {
    if (!Number.isFinite(value) || value <= 0) {
      throw new RangeError(`${name} must be a finite positive number, got ${value}`);
    }
  }
  // Oil immersion tops out near 1.5 and solid-immersion/TIRF objectives near 1.65.
  if (numericalAperture > 1.7) {
    throw new RangeError(`numericalAperture must be at most 1.7, got ${numericalAperture}`);
  }
  return (0.21 * emissionNm) / numericalAperture / pixelSizeNm;
}
