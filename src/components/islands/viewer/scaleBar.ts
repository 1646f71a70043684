/**
 * Scale bar lengths shared by the deep-zoom viewer and the alignment check: a "round" length (1, 2, 2.5, 5 × 10ⁿ µm,
 * the usual steps of a micrograph scale bar, common practice) closest to a wanted on-screen length.
 */

/** Lengths a scale bar may take (µm). */
export const SCALE_BAR_UM = [0.05, 0.1, 0.2, 0.25, 0.5, 1, 2, 2.5, 5, 10, 20, 25, 50, 100, 200, 500] as const;

export interface ScaleBar {
  /** Length of the bar on screen (screen pixels, or canvas pixels for a canvas). */
  px: number;
  /** Length it stands for (µm). */
  um: number;
  /** "250 nm" below 1 µm, "2.5 µm" from 1 µm on. */
  label: string;
}

/**
 * The bar whose on-screen length is closest to `targetPx`.
 *
 * @param umPerPx - micrometres per screen (or canvas) pixel at the current zoom
 * @param targetPx - wanted length on screen (pixels)
 * @param lengthsUm - allowed lengths (µm), by default {@link SCALE_BAR_UM}
 */
export function scaleBarFor(umPerPx: number, targetPx: number, lengthsUm: readonly number[] = SCALE_BAR_UM): ScaleBar {
  const targetUm = targetPx * umPerPx;
  const um = lengthsUm.reduce((best, n) => (Math.abs(n - targetUm) < Math.abs(best - targetUm) ? n : best), lengthsUm[0]);
  return { px: um / umPerPx, um, label: um < 1 ? `${Math.round(um * 1000)} nm` : `${um} µm` };
}
