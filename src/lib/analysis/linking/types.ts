/**
 * The camera noise model of a fluorescence frame, in raw counts as the camera writes them: a pixel holding N photons
 * (signal + background) reads offsetCounts + gainCountsPerPhoton·N + read noise, so its variance is
 * gain·(mean − offset) + read² (Poisson photon noise scaled by the gain, plus Gaussian read noise).
 * For an sCMOS or CCD the three values are on the camera's data sheet or from a photon-transfer measurement.
 */
export interface CameraModel {
  /** Counts a dark pixel reads (bias) (counts). */
  readonly offsetCounts: number;
  /** Counts per detected photon (counts/photon); 1 for a camera that reports photo-electrons. */
  readonly gainCountsPerPhoton: number;
  /** Read noise, RMS (counts). */
  readonly readNoiseCounts: number;
}

/** Null calibration of z = amplitude / SE, from fits at empty places of the same frame. */
export interface NullCalibration {
  /** Median of z at the empty places (dimensionless); 0 when not calibrated. */
  readonly medianZ: number;
  /** 1.4826·MAD of z at the empty places (dimensionless); 1 when not calibrated. */
  readonly madZ: number;
  /** Number of empty places fitted. */
  readonly nbPlaces: number;
  /** False when too few empty places were free: z is then used as is (median 0, MAD 1). */
  readonly calibrated: boolean;
}

/** Kinds of control sample that may set a specificity threshold (buffer-only controls never do). */
export type ThresholdControlKind = 'isotype' | 'secondary_only';

/**
 * How one marker is called. Every rule reports z, p and q; they differ in what the amplitude must exceed.
 * - camera_noise: calibrated z = (z − medianZ)/madZ above zCritical (detected above the camera and background noise).
 * - control: the same, and the joint amplitude above the control kind's threshold (non-specific binding).
 * - manual: the joint amplitude above a threshold set by hand (counts).
 */
export type MarkerCallRule =
  | { readonly rule: 'camera_noise'; readonly zCritical: number; readonly nullCalibration: NullCalibration }
  | {
      readonly rule: 'control';
      readonly zCritical: number;
      readonly nullCalibration: NullCalibration;
      readonly controlKind: ThresholdControlKind;
      /** Joint-amplitude threshold from the control vesicles (counts). */
      readonly thresholdCounts: number;
    }
  | { readonly rule: 'manual'; readonly thresholdCounts: number; readonly nullCalibration?: NullCalibration };
