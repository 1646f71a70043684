import { errorFunction } from 'simple-statistics';

/**
 * Fraction of a unit-integral 2-D isotropic Gaussian that falls inside one square pixel.
 *
 * The pixel spans [dx − ½, dx + ½] × [dy − ½, dy + ½] relative to the Gaussian's centre; the fraction is the
 * product of two 1-D normal-CDF differences. Summed over all pixels it gives 1, so a model built from it has
 * amplitudes in total (photometric) counts.
 *
 * @param dxPx - pixel centre minus Gaussian centre, column direction (px)
 * @param dyPx - pixel centre minus Gaussian centre, row direction (px)
 * @param sigmaPx - Gaussian standard deviation (px)
 * @returns fraction of the total in that pixel (0–1)
 */
export function gaussianPixelFraction(dxPx: number, dyPx: number, sigmaPx: number): number {
  const k = 1 / (Math.SQRT2 * sigmaPx);
  const fx = 0.5 * (errorFunction((dxPx + 0.5) * k) - errorFunction((dxPx - 0.5) * k));
  const fy = 0.5 * (errorFunction((dyPx + 0.5) * k) - errorFunction((dyPx - 0.5) * k));
  return fx * fy;
}
