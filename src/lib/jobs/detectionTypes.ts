/** What ingestion detected in a field, stored as JSON beside its tiles (pixels of each image). */
export interface FieldDetection {
  afmPixelNm: number;
  flPixelNm: number;
  thresholdNm: number;
  backgroundSigmaNm: number;
  vesicles: { x: number; y: number; heightNm: number; diameterNm: number }[];
  fiducialCandidates: { x: number; y: number; heightNm: number; diameterNm: number }[];
  spots: { channelIndex: number; marker: string; sigmaPx: number; spots: { x: number; y: number; integratedCounts: number; snr: number }[] }[];
}
