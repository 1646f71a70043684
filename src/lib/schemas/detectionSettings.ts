import './zodConfig';
/**
 * Vesicle-detection settings an analyst chooses per field (stored in `fields.detection_settings`), and their
 * conversion to the options of the height-map analysis. Everything here is in physical units (nm, nm²); the
 * analysis takes the minimum area in pixels, so it is converted with the field's AFM pixel size.
 * Pure: shared by the route, the ingestion job and the form island.
 */
import { z } from 'zod';
import type { AnalyzeHeightMapOptions } from '../analysis/heightmap/types';

const num = (what: string) => z.number({ error: `${what} must be a number` }).finite(`${what} must be a finite number`);

/** How the height threshold between substrate and particles is chosen. */
export const ThresholdSetting = z.discriminatedUnion('method', [
  /** Background median + k × robust sigma of the levelled background. */
  z.object({ method: z.literal('robust'), k: num('k (× σ)').min(1, 'k must be at least 1 × σ').max(10, 'k must be at most 10 × σ') }).strict(),
  /** Otsu's two-class split of the height histogram. */
  z.object({ method: z.literal('otsu') }).strict(),
  /** A fixed height above the levelled substrate. */
  z.object({ method: z.literal('manual'), thresholdNm: num('Threshold (nm)').positive('Threshold (nm) must be above 0 nm').max(1000, 'Threshold (nm) must be at most 1000 nm') }).strict(),
], { error: "Threshold method must be 'robust', 'otsu' or 'manual'" });
export type ThresholdSetting = z.infer<typeof ThresholdSetting>;

/** The analyst's detection settings of one field. */
export const DetectionSettings = z.object({
  threshold: ThresholdSetting,
  /** Regions whose highest pixel is lower than this are dropped (nm). */
  minHeightNm: num('Minimum height (nm)').min(0, 'Minimum height (nm) cannot be negative').max(1000, 'Minimum height (nm) must be at most 1000 nm'),
  /** Regions with a smaller projected area are dropped (nm²). */
  minAreaNm2: num('Minimum area (nm²)').min(0, 'Minimum area (nm²) cannot be negative').max(1e7, 'Minimum area (nm²) must be at most 10 000 000 nm²'),
  /** Regions taller than this are fiducial candidates (beads), not vesicles (nm). */
  beadMinHeightNm: num('Bead cut-off height (nm)').positive('Bead cut-off height (nm) must be above 0 nm').max(10_000, 'Bead cut-off height (nm) must be at most 10 000 nm'),
  /** Order of the levelling background: 1 = plane, 2 = second-order polynomial (bow). */
  levellingOrder: z.union([z.literal(1), z.literal(2)], { error: 'Levelling order must be 1 (plane) or 2 (bow)' }),
}).strict();
export type DetectionSettings = z.infer<typeof DetectionSettings>;

/** Body of PUT /api/fields/:id/detection-settings: new settings (null = automatic defaults) and the field version seen. */
export const DetectionSettingsRequest = z.object({
  settings: DetectionSettings.nullable(),
  expectedVersion: z.number().int().positive(),
}).strict();
export type DetectionSettingsRequest = z.infer<typeof DetectionSettingsRequest>;

/** The analysis defaults, in px where the analysis counts px: detectVesicles' minimum area (px). */
export const DEFAULT_MIN_AREA_PX = 9;

/**
 * The settings ingestion used when a field has none: the analysis defaults (robust k = 3, 2 nm, 9 px, 300 nm,
 * plane), with 9 px expressed in nm² for this pixel size.
 * @param afmPixelNm - AFM pixel size (nm/px)
 */
export function defaultDetectionSettings(afmPixelNm: number): DetectionSettings {
  return { threshold: { method: 'robust', k: 3 }, minHeightNm: 2, minAreaNm2: DEFAULT_MIN_AREA_PX * afmPixelNm * afmPixelNm, beadMinHeightNm: 300, levellingOrder: 1 };
}

/**
 * Options of analyzeHeightMap for a field. `null` gives exactly the options ingestion has always used (only the
 * tip radius), so a field without settings is analysed as before. The minimum area is converted from nm² to px
 * with area_px = area_nm² / pixel_nm², rounded to 1e-6 px so that 9 px × 13² nm² comes back as 9 px.
 *
 * @param settings - the field's settings or null
 * @param afmPixelNm - AFM pixel size (nm/px), > 0
 * @param tipRadiusNm - tip radius for the measurement (nm); 0 = no correction
 */
export function detectionOptions(settings: DetectionSettings | null, afmPixelNm: number, tipRadiusNm: number): AnalyzeHeightMapOptions {
  if (!(afmPixelNm > 0)) throw new RangeError(`afmPixelNm must be > 0, got ${afmPixelNm}`);
  if (!settings) return { measure: { tipRadiusNm } };
  const minAreaPx = Math.round((settings.minAreaNm2 / (afmPixelNm * afmPixelNm)) * 1e6) / 1e6;
  return {
    level: { surface: settings.levellingOrder === 2 ? 'poly2' : 'plane' },
    threshold: settings.threshold.method === 'robust' ? { method: 'robust', k: settings.threshold.k } : settings.threshold,
    detect: { minHeightNm: settings.minHeightNm, minAreaPx, beadMinHeightNm: settings.beadMinHeightNm },
    measure: { tipRadiusNm },
  };
}
