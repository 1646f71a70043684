import type { DetectionSettings } from './detectionSettings';

/** What ingestion detected in a field, stored as JSON beside its tiles (pixels of each image). */
export interface FieldDetection {
  afmPixelNm: number;
  flPixelNm: number;
  /**
   * The detection settings this detection used (nm, nm²), with the minimum area as the analysis applied it (px),
   * and whether they were the defaults or the analyst's. Absent in detections made before settings existed.
   */
  settings?: DetectionSettings & { minAreaPx: number; source: 'defaults' | 'analyst' };
  thresholdNm: number;
  backgroundSigmaNm: number;
  vesicles: { x: number; y: number; heightNm: number; diameterNm: number }[];
  fiducialCandidates: { x: number; y: number; heightNm: number; diameterNm: number }[];
  spots: { channelIndex: number; marker: string; sigmaPx: number; spots: { x: number; y: number; integratedCounts: number; snr: number }[] }[];
}
