import type { FluorescenceSpot } from '../fluorescence/types';
import type { FiducialPair, RegistrationModel, RegistrationWarning } from '../geometry';
import type { LevelHeightMapOptions, MeasureVesicleResult } from '../heightmap/types';
import type { Affine, Point, Raster } from '../types';

/** Stages of {@link analyzeField}, in the order they run. */
export type FieldStage = 'level' | 'detect' | 'measure' | 'spots' | 'register' | 'link' | 'summarise';

/** One fluorescence channel: the frame of one antibody-labelled marker. */
export interface FieldChannel {
  /** Marker name, e.g. "CD63"; unique within a field. */
  readonly marker: string;
  /** Raw frame (counts); the camera offset may remain. Every channel has the same size. */
  readonly raster: Raster;
  /** Emission wavelength of the fluorophore (nm); sets the PSF width. */
  readonly emissionNm: number;
}

/** Everything {@link analyzeField} analyses. */
export interface AnalyzeFieldInput {
  /** Raw AFM height map (nm). */
  readonly heightNm: Raster;
  /** AFM pixel size (nm/px). */
  readonly afmPixelNm: number;
  /** Fluorescence frames, one per marker; their order sets the CSV column and phenotype order. */
  readonly channels: readonly FieldChannel[];
  /** Fluorescence pixel size in the sample plane (nm/px). */
  readonly flPixelNm: number;
  /** Objective numerical aperture (dimensionless). */
  readonly numericalAperture: number;
  /**
   * Fiducials placed by a person (AFM px, fluorescence px). Each pick is refined to the candidate under it.
   * When absent, the pairs are found automatically.
   */
  readonly fiducialPairs?: readonly FiducialPair[];
  /**
   * A registration saved earlier (e.g. accepted by an analyst). When given, vesicles are mapped with exactly its
   * `flFromAfm` and its model; its pairs are not refined or refitted and serve only for the error figures.
   * Takes precedence over `fiducialPairs`.
   */
  readonly savedRegistration?: SavedRegistration;
  /**
   * Positivity threshold per marker, in joint-amplitude counts (total counts of one vesicle's PSF, the quantity
   * called; e.g. mean + 3 SD of control vesicles' amplitudes); markers without one get mean + k SD of the
   * amplitudes fitted at empty places of the same frame.
   */
  readonly thresholdCountsByMarker?: Readonly<Record<string, number>>;
}

/** A stored registration: the transform and the model it was fitted with, and the pairs it came from. */
export interface SavedRegistration {
  /** AFM px → fluorescence px, as saved. */
  readonly flFromAfm: Affine;
  readonly model: RegistrationModel;
  /** The pairs the transform was fitted to (AFM px, fluorescence px); at least 2. */
  readonly pairs: readonly FiducialPair[];
}

/** Options of {@link analyzeField}. */
export interface AnalyzeFieldOptions {
  /** Manual height threshold for detection (nm); else the robust background threshold (median + 3·SD). @default undefined */
  thresholdNm?: number;
  /** Levelling options. @default {} */
  level?: LevelHeightMapOptions;
  /** AFM tip radius for the broadening correction of the cap model (nm). @default 0 */
  tipRadiusNm?: number;
  /** Camera offset subtracted before spot detection (counts). @default 0 (the tile background absorbs it) */
  cameraOffsetCounts?: number;
  /** Spot detection threshold in robust SDs of the LoG response. @default 5 */
  spotThresholdK?: number;
  /**
   * k of the background positivity rule per marker: markers without a given threshold are called positive above
   * mean + k SD of the amplitudes fitted at empty places of the frame. @default 3 for every marker (common practice)
   */
  positivityKByMarker?: Readonly<Record<string, number>>;
  /** A fiducial pick snaps to a candidate at most this far away in either image (nm of sample); 0 keeps picks as given. @default 300 */
  snapRadiusNm?: number;
  /** Spots of different channels closer than this are one candidate for automatic pairing (fluorescence px). @default 1.5 */
  mergeSpotsPx?: number;
  /** Automatic pairing: inlier distance (fluorescence px). @default 2 */
  pairingToleranceFlPx?: number;
  /** Seed of the automatic pairing sampler. @default 1 */
  seed?: number;
  /** Called at the start (0) and end (1) of every stage, and in between where a stage loops. @default none */
  onProgress?: (stage: FieldStage, fraction: number) => void;
}

/** How far one given fiducial pick moved when refined. */
export interface FiducialRefinement {
  /** The pick as given (AFM px / fluorescence px). */
  readonly given: FiducialPair;
  /** The refined pair actually used. */
  readonly refined: FiducialPair;
  /** Whether a candidate was found under the pick in each image; if not, the pick is used as given. */
  readonly afmSnapped: boolean;
  readonly flSnapped: boolean;
  /** Distance moved (px of that image and nm of sample). */
  readonly afmMovedPx: number;
  readonly afmMovedNm: number;
  readonly flMovedPx: number;
  readonly flMovedNm: number;
}

/** The registration used for a field. */
export interface FieldRegistration {
  /** 'saved' when a saved transform was used as is, 'fiducials' when pairs were given, 'automatic' when found. */
  readonly source: 'saved' | 'fiducials' | 'automatic';
  /** Transform model ('affine' unless a saved similarity was used). */
  readonly model: RegistrationModel;
  readonly flFromAfm: Affine;
  readonly afmFromFl: Affine;
  /** Words for people, e.g. "scale ..., rotation ..., mirrored". */
  readonly description: string;
  readonly mirrored: boolean;
  /** Pairs in the fit (refined picks, or the automatic inliers). */
  readonly pairs: readonly FiducialPair[];
  readonly nbPairs: number;
  /** Fiducial registration error: RMS residual (nm). */
  readonly freNm: number;
  readonly rmsResidualPx: number;
  /** RMS of held-out errors (nm); null with too few pairs. */
  readonly leaveOneOutTreRmsNm: number | null;
  /** Predicted RMS target error at the fiducial centroid (nm); null without an error estimate. */
  readonly predictedTreAtCentroidNm: number | null;
  readonly warnings: readonly RegistrationWarning[];
  /** One entry per given pick; null for automatic pairing and for a saved registration. */
  readonly refinement: readonly FiducialRefinement[] | null;
}

/** One marker's call for one vesicle; null values where the vesicle lies outside the frame. */
export interface VesicleMarkerCall {
  /** Net aperture counts (counts); reported, not called (it also collects a close neighbour's light). */
  readonly intensityCounts: number | null;
  readonly intensitySnr: number | null;
  /** Joint NNLS amplitude: total counts of this vesicle's PSF (counts), the value compared with the threshold. */
  readonly amplitudeCounts: number | null;
  /**
   * The same without the non-negativity constraint (counts, may be < 0); control-sample thresholds use it.
   * Absent in records rebuilt from storage that did not keep it.
   */
  readonly unconstrainedAmplitudeCounts?: number | null;
  /** amplitudeCounts over its standard error (dimensionless); absent in records rebuilt from storage. */
  readonly amplitudeSnr?: number | null;
  /** Distance to the nearest detected spot within the match radius (fluorescence px), else null. */
  readonly spotDistancePx: number | null;
  readonly positive: boolean | null;
}

/** One vesicle of the field: geometry from AFM, calls from fluorescence. */
export interface VesicleRecord {
  /** 0-based, in detection order (row, then column of the peak). */
  readonly index: number;
  /** Height-weighted centroid (AFM px). */
  readonly xAfmPx: number;
  readonly yAfmPx: number;
  /** The centroid mapped by flFromAfm (fluorescence px). */
  readonly xFlPx: number;
  readonly yFlPx: number;
  /** Apex height from the quadratic fit (nm). */
  readonly heightNm: number;
  /** Footprint-equivalent diameter 2·√(A/π) (nm); includes tip broadening. */
  readonly diameterNm: number;
  /** Σ height × pixel area over the footprint (nm³). */
  readonly volumeNm3: number;
  /** Projected footprint area (nm²). */
  readonly areaNm2: number;
  /** 4πA/P² (dimensionless). */
  readonly circularity: number;
  /** Mean height over the footprint (nm). */
  readonly meanHeightNm: number;
  /** Spherical-cap model (tip-corrected when a tip radius was given); null when the cap is degenerate. */
  readonly cap: { readonly baseRadiusNm: number; readonly contactAngleDeg: number; readonly volumeEquivalentDiameterNm: number } | null;
  /** True when the vesicle maps outside at least one channel's frame. */
  readonly outOfFrame: boolean;
  /** e.g. "CD9+ CD63- CD81?" (? = outside that frame). */
  readonly phenotype: string;
  readonly markers: Readonly<Record<string, VesicleMarkerCall>>;
}

/** Per-marker summary. */
export interface FieldChannelSummary {
  readonly emissionNm: number;
  readonly psfSigmaPx: number;
  readonly nbSpots: number;
  /** Threshold on the joint amplitude (counts of PSF amplitude, see thresholdUnit). */
  readonly thresholdCounts: number;
  /** The quantity compared with the threshold. */
  readonly thresholdMeasure: 'joint_amplitude';
  /** Words for the unit of thresholdCounts and amplitudeCounts, for people. */
  readonly thresholdUnit: string;
  /** 'given' (e.g. control samples) or mean + k SD of amplitudes fitted at empty places of the frame. */
  readonly thresholdSource: 'given' | 'background_amplitudes';
  /** Ingredients of a background threshold (counts of PSF amplitude); null when the threshold was given. */
  readonly backgroundMeanCounts: number | null;
  readonly backgroundSdCounts: number | null;
  /** Number of empty places fitted for a background threshold (the name is kept for stored summaries). */
  readonly nbBackgroundApertures: number | null;
  readonly nbPositive: number;
  /** Spots with no vesicle and no fiducial within 2 PSF sigmas (possible debris, free dye, missed EVs). */
  readonly nbSpotsWithoutVesicle: number;
  /** Spots on a fiducial (bead), not counted as vesicle signal. */
  readonly nbSpotsOnFiducials: number;
}

/** Field-level result of {@link analyzeField}. */
export interface FieldSummary {
  readonly afmPixelNm: number;
  readonly flPixelNm: number;
  readonly numericalAperture: number;
  readonly markers: readonly string[];
  /** Height threshold of detection (nm) and how it was chosen. */
  readonly heightThresholdNm: number;
  readonly heightThresholdMethod: 'robust' | 'manual' | 'otsu';
  readonly backgroundSigmaNm: number;
  readonly nbVesicles: number;
  readonly nbFiducialCandidates: number;
  readonly registration: FieldRegistration;
  readonly channels: Readonly<Record<string, FieldChannelSummary>>;
  readonly positiveByMarker: Readonly<Record<string, number>>;
  /** Number of vesicles per phenotype string (all vesicles, out-of-frame ones under their "?" phenotype). */
  readonly phenotypeCounts: Readonly<Record<string, number>>;
  readonly nbOutOfFrame: number;
  readonly spotsWithoutVesicleByMarker: Readonly<Record<string, number>>;
  /** In every frame and negative for every marker. */
  readonly nbVesiclesWithoutMarker: number;
}

/** Output of {@link analyzeField}. */
export interface AnalyzeFieldResult {
  readonly records: readonly VesicleRecord[];
  readonly summary: FieldSummary;
  /** Label map of the detection (AFM px): 0 background, else a region label. */
  readonly labels: Int32Array;
  readonly vesicles: readonly MeasureVesicleResult[];
  readonly fiducialCandidates: readonly MeasureVesicleResult[];
  /** Detected spots per marker (fluorescence px). */
  readonly spotsByMarker: Readonly<Record<string, readonly FluorescenceSpot[]>>;
  /** Fiducial candidates mapped into fluorescence pixels. */
  readonly fiducialsFl: readonly Point[];
}
