import type { FluorescenceSpot } from '../fluorescence/types';
import type { ChannelRegistration, FiducialPair, RegistrationModel, RegistrationWarning } from '../geometry';
import type { AnalyzeHeightMapResult, CapSizeFlag, LevelHeightMapOptions, MeasureVesicleResult } from '../heightmap/types';
import type { Affine, Point, Raster } from '../types';
import type { CameraModel, ThresholdControlKind } from '../linking/types';

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
   * The height-map detection an analyst reviewed (analyzeHeightMap with the field's detection settings). When
   * given, its levelling, threshold, regions and measured vesicles and fiducial candidates are used as they are,
   * so the vesicles linked are exactly those reviewed; `thresholdNm`, `level` and `tipRadiusNm` then play no part.
   */
  readonly reviewedDetection?: AnalyzeHeightMapResult;
  /**
   * Positivity threshold per marker set by hand (the manual rule), in joint-amplitude counts (total counts of one
   * vesicle's PSF, the quantity called). Wins over a control threshold and over the camera-noise rule.
   */
  readonly thresholdCountsByMarker?: Readonly<Record<string, number>>;
  /**
   * Specificity threshold per marker from the study's control samples (the control rule): a vesicle is positive when
   * it is detected above camera noise and its joint amplitude exceeds thresholdCounts (e.g. the 0.99 quantile of
   * isotype control vesicles' amplitudes, see controlQuantileThreshold). Markers with neither this nor a hand-set
   * threshold are called on camera noise alone.
   */
  readonly controlThresholdByMarker?: Readonly<Record<string, { readonly kind: ThresholdControlKind; readonly thresholdCounts: number; readonly nbControls: number }>>;
  /**
   * The camera noise model (per study). Values left out are estimated from each frame (estimateCameraModel: gain 1
   * and an effective offset unless the offset is known), and the summary says which.
   */
  readonly camera?: Partial<CameraModel>;
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
   * z_crit per marker: a vesicle is detected above camera noise when its calibrated z (its amplitude in SDs of the
   * empty places' null) exceeds k. @default 2.58 for every marker (one-sided p < 0.005)
   */
  positivityKByMarker?: Readonly<Record<string, number>>;
  /** Spots found at this lower LoG threshold (robust SDs) are avoided by the null places and fitted as their own sources. @default 3 */
  dimSpotThresholdK?: number;
  /** Chance colocalisation: shift lengths of the vesicle set (µm) and number of seeded shifts. @default { minUm: 2, maxUm: 4, nbShifts: 5 } */
  chanceShifts?: { readonly minUm: number; readonly maxUm: number; readonly nbShifts: number };
  /**
   * Measure vesicles with each channel's PSF width as measured on the beads (bead size and pixel width removed),
   * where the channel had enough beads; false keeps 0.21λ/NA for every channel. @default true
   */
  psfFromBeads?: boolean;
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
  readonly warnings: readonly (RegistrationWarning | FieldRegistrationNote)[];
  /**
   * Each channel's own transform: the common flFromAfm refined by a translation (chromatic shift) measured on the
   * beads, and the PSF width measured on them; estimated at link time from the beads, also for a saved registration.
   */
  readonly channels: Readonly<Record<string, ChannelRegistration>>;
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
  /** amplitudeCounts / gain (photons) when the gain is known (given, or estimated from a given offset); else absent. */
  readonly amplitudePhotons?: number | null;
  /** Standard error of amplitudeCounts under the stated camera noise model (counts). */
  readonly amplitudeSeCounts?: number | null;
  /** amplitudeCounts / amplitudeSeCounts (dimensionless), the same as amplitudeSnr. */
  readonly z?: number | null;
  /** z calibrated by the frame's null: (z − median)/MAD of z at empty places (dimensionless). */
  readonly zCalibrated?: number | null;
  /** One-sided p-value of zCalibrated, and its Benjamini–Hochberg q over this marker's measured vesicles in the field. */
  readonly pValue?: number | null;
  readonly qValue?: number | null;
  /** Distance to the nearest detected spot within the match radius (fluorescence px), else null. */
  readonly spotDistancePx: number | null;
  /** The call under the marker's rule (FieldChannelSummary.rule); null = not measured (outside this channel's frame). */
  readonly positive: boolean | null;
}

/*
 * Marker calls, final shape (for storage, exports and the UI):
 * - per vesicle and marker (VesicleMarkerCall): amplitudeCounts (joint NNLS, counts), amplitudePhotons?,
 *   amplitudeSeCounts, z, zCalibrated, pValue (one-sided), qValue (BH within field and marker), positive
 *   (true / false / null = not measured: outside that frame), next to the older intensity*, amplitudeSnr (= z),
 *   unconstrainedAmplitudeCounts and spotDistancePx;
 * - per marker (FieldChannelSummary): rule ('camera_noise' | 'control' | 'manual'), ruleSentence (what "positive"
 *   means, one sentence for people), zCritical, null calibration, camera model and its source, controlKind,
 *   nbMeasured (the denominator), positiveFraction and chancePositiveFraction;
 * - per field (FieldSummary): positiveByMarker with nbMeasuredByMarker; phenotypeCounts over the vesicles measured in
 *   every channel only (nbMeasuredAllChannels).
 */

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
  /** Threshold footprint diameter 2·√(A/π) (nm): tip-broadened and threshold-dependent; not a size to publish. */
  readonly footprintDiameterNm: number;
  /** Σ height × pixel area over the footprint (nm³). */
  readonly volumeNm3: number;
  /** Projected footprint area (nm²). */
  readonly areaNm2: number;
  /** 4πA/P² (dimensionless). */
  readonly circularity: number;
  /** Mean height over the footprint (nm). */
  readonly meanHeightNm: number;
  /**
   * Spherical cap from a sphere fitted to the surface, tip-corrected (R_c = R_image − R); see docs/vesicle-columns.md.
   * Not corrected when `capFlag` is 'no_tip_radius'; null when the flag says the sizes are not possible.
   */
  readonly cap: {
    readonly baseRadiusNm: number;
    /** Cap height h: top of the fitted sphere (nm). */
    readonly heightNm: number;
    readonly contactAngleDeg: number;
    /** πh(3a² + h²)/6 (nm³). */
    readonly volumeNm3: number;
    /** (6V/π)^(1/3) (nm). */
    readonly volumeEquivalentDiameterNm: number;
  } | null;
  /** Why the cap sizes are missing or uncorrected; null when they are tip-corrected and sound. */
  readonly capFlag: CapSizeFlag | null;
  /** Cut from a touching pair or cluster by the watershed: its footprint ends at a saddle line. */
  readonly split: boolean;
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
  /**
   * 'given': a threshold set by hand (manual rule); 'camera_noise': calibrated z above zCritical, thresholdCounts is
   * then the amplitude a lone vesicle on the typical background needs; 'control': that and the control's threshold
   * (thresholdCounts). 'background_amplitudes' only in summaries stored before calls had an error model.
   */
  readonly thresholdSource: 'given' | 'background_amplitudes' | 'camera_noise' | 'control';
  /**
   * Null of the camera-noise test in counts: medianZ·SE and MAD(z)·SE at the empty places (typical SE), so that
   * thresholdCounts = backgroundMeanCounts + zCritical·backgroundSdCounts for the camera-noise rule; null for 'given'.
   */
  readonly backgroundMeanCounts: number | null;
  readonly backgroundSdCounts: number | null;
  /** Number of empty places fitted for the null (the name is kept for stored summaries). */
  readonly nbBackgroundApertures: number | null;
  readonly nbPositive: number;
  /** How the marker was called, and the one sentence that says what "positive" means under it. */
  readonly rule?: 'camera_noise' | 'control' | 'manual';
  readonly ruleSentence?: string;
  /** Calibrated z a vesicle must exceed (camera-noise and control rules); null for the manual rule. */
  readonly zCritical?: number | null;
  /** Median and 1.4826·MAD of z at empty places; calibrated false when too few places were free (z used as is). */
  readonly nullMedianZ?: number;
  readonly nullMadZ?: number;
  readonly nullCalibrated?: boolean;
  /** Typical SE of a lone amplitude at the empty places (counts). */
  readonly typicalSeCounts?: number | null;
  /** The camera model used for this frame, 'given' or 'estimated', and a note on what was assumed. */
  readonly camera?: CameraModel;
  readonly cameraSource?: 'given' | 'estimated';
  readonly cameraNote?: string;
  /** The control kind and number of control vesicles behind a control threshold; null otherwise. */
  readonly controlKind?: ThresholdControlKind | null;
  readonly nbControls?: number | null;
  /** Vesicles inside this frame (the denominator); nbPositive / nbMeasured. */
  readonly nbMeasured?: number;
  readonly positiveFraction?: number | null;
  /** Positive fraction at randomly shifted vesicle positions (chance colocalisation), and the positions tried. */
  readonly chancePositiveFraction?: number | null;
  readonly nbChancePositions?: number;
  /** Spots (dim ones included) away from every vesicle that got their own PSF column in the joint fit. */
  readonly nbOtherSources?: number;
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
  /** Vesicles inside each marker's frame: the denominators of positiveByMarker. */
  readonly nbMeasuredByMarker?: Readonly<Record<string, number>>;
  /**
   * Number of vesicles per phenotype string, over the vesicles measured in every channel only (a vesicle outside a
   * frame has no phenotype); nbMeasuredAllChannels is their total.
   */
  readonly phenotypeCounts: Readonly<Record<string, number>>;
  readonly nbMeasuredAllChannels?: number;
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
  /** Beads (never vesicles): shown, exported apart, used for registration; not in records, counts or phenotypes. */
  readonly beads: readonly BeadRecord[];
}

/** Why an object is a bead: taller than the field's vesicles, bright in every channel, or under a fiducial pick. */
export type BeadReason = 'height' | 'multicolour' | 'fiducial_pick';

/** One bead of the field. */
export interface BeadRecord {
  /** 0-based within the field's beads. */
  readonly index: number;
  /** Height-weighted centroid (AFM px). */
  readonly xAfmPx: number;
  readonly yAfmPx: number;
  /** Apex height (nm): a bead's diameter. */
  readonly heightNm: number;
  /** Footprint-equivalent diameter (nm), tip-broadened. */
  readonly footprintDiameterNm: number;
  /** 4πA/P² (dimensionless). */
  readonly circularity: number;
  /** The first of `reasons` in the order height, multicolour, fiducial_pick. */
  readonly reason: BeadReason;
  readonly reasons: readonly BeadReason[];
  /** Index of the fiducial pick (or saved pair) on it, else null. */
  readonly pickIndex: number | null;
  /** Centre mapped into each channel by that channel's transform (px). */
  readonly flPxByMarker: Readonly<Record<string, Point>>;
  /** Integrated counts of its fitted image in each channel (counts); null where not fitted. */
  readonly integratedCountsByMarker: Readonly<Record<string, number | null>>;
}

/** A registration note of the bead and channel steps, for people. */
export interface FieldRegistrationNote {
  /**
   * 'fiducial_on_vesicle': a pick sits on an object that looks like a vesicle; 'fiducial_on_background': no object
   * under a pick; 'channel_common_transform': too few beads in a channel, which keeps the common transform.
   */
  readonly code: 'fiducial_on_vesicle' | 'fiducial_on_background' | 'channel_common_transform';
  readonly message: string;
}
