/**
 * The height-map detection of one field with the field's own detection settings: the one function both ingestion
 * (which stores it for review as detection.json) and linking (which measures those same vesicles) call, so the
 * vesicles released are the vesicles an analyst reviewed.
 */
import { analyzeHeightMap } from '../analysis/heightmap';
import type { AnalyzeHeightMapResult } from '../analysis/heightmap/types';
import type { Raster } from '../analysis/types';
import { DetectionSettings, DEFAULT_MIN_AREA_PX, defaultDetectionSettings, detectionOptions } from '../schemas/detectionSettings';
import type { FieldDetection } from './detectionTypes';
import { PermanentJobError } from './ingestField';

/** The columns of a field row this needs. */
export interface FieldDetectionSource {
  detectionSettings: unknown;
  afmPixelNm: number | null;
  tipRadiusNm: number | null;
}

/**
 * Levels and detects the field's height map with its saved detection settings (none = the analysis defaults).
 * @returns the analysis and the settings as applied (minimum area in px, and whether they were the analyst's)
 * @throws PermanentJobError when the saved settings no longer validate
 */
export function fieldHeightMap(field: FieldDetectionSource, height: Raster): { afm: AnalyzeHeightMapResult; settingsUsed: NonNullable<FieldDetection['settings']> } {
  // settings saved by an analyst (validated again: the column is plain JSON); none = the analysis defaults
  const parsed = field.detectionSettings == null ? null : DetectionSettings.safeParse(field.detectionSettings);
  if (parsed && !parsed.success) throw new PermanentJobError('The saved detection settings are not valid; save them again on the field page.');
  const chosen = parsed?.data ?? null;
  const options = detectionOptions(chosen, field.afmPixelNm!, field.tipRadiusNm ?? 0);
  const afm = analyzeHeightMap(height, field.afmPixelNm!, options);
  const settingsUsed: NonNullable<FieldDetection['settings']> = {
    ...(chosen ?? defaultDetectionSettings(field.afmPixelNm!)),
    minAreaPx: options.detect?.minAreaPx ?? DEFAULT_MIN_AREA_PX,
    source: chosen ? 'analyst' : 'defaults',
  };
  return { afm, settingsUsed };
}

/** The vesicles and fiducial candidates of a detection as detection.json lists them for review (AFM px, nm). */
export function detectionLists(afm: AnalyzeHeightMapResult): Pick<FieldDetection, 'vesicles' | 'fiducialCandidates'> {
  const item = (v: AnalyzeHeightMapResult['vesicles'][number]) => ({ x: v.centroidPx.x, y: v.centroidPx.y, heightNm: v.apexHeightNm, diameterNm: v.footprintDiameterNm });
  return { vesicles: afm.vesicles.map(item), fiducialCandidates: afm.fiducialCandidates.map(item) };
}

/** Positions agree to this (AFM px): the stored JSON keeps doubles, so equal detections agree exactly; 1e-6 allows for nothing else. */
const SAME_POSITION_PX = 1e-6;

/**
 * Why a fresh detection is not the reviewed one, or null when it is: the same settings, and the same vesicles and
 * fiducial candidates in the same order at the same positions.
 * @param reviewed - detection.json as ingestion stored it for review
 * @param fresh - the detection made for linking
 * @param settingsUsed - the settings the fresh detection used
 */
export function reviewedDetectionMismatch(
  reviewed: FieldDetection, fresh: AnalyzeHeightMapResult, settingsUsed: NonNullable<FieldDetection['settings']>,
): string | null {
  if (reviewed.settings && JSON.stringify(canonical(reviewed.settings)) !== JSON.stringify(canonical(settingsUsed))) {
    return 'the detection settings were changed after the vesicles shown for review were detected';
  }
  const lists: [string, string, FieldDetection['vesicles'], AnalyzeHeightMapResult['vesicles']][] = [
    ['vesicles', 'vesicle', reviewed.vesicles, fresh.vesicles],
    ['fiducial candidates', 'fiducial candidate', reviewed.fiducialCandidates, fresh.fiducialCandidates],
  ];
  for (const [what, one, shown, found] of lists) {
    if (shown.length !== found.length) return `${found.length} ${what} were found where ${shown.length} were shown for review`;
    for (let i = 0; i < shown.length; i++) {
      const d = Math.hypot(shown[i].x - found[i].centroidPx.x, shown[i].y - found[i].centroidPx.y);
      if (!(d <= SAME_POSITION_PX)) return `${one} ${i + 1} lies ${d.toFixed(2)} px from where it was shown for review`;
    }
  }
  return null;
}

/** Key order does not matter when settings are compared. */
function canonical(o: object): [string, unknown][] {
  return Object.entries(o).sort(([a], [b]) => a.localeCompare(b)).map(([k, v]) => [k, v && typeof v === 'object' ? canonical(v) : v]);
}
