import type { Point, Raster } from '../types';

// ---------------------------------------------------------------- levelling

/** Options of {@link levelHeightMap}. */
export interface LevelHeightMapOptions {
  /** Background surface model: a plane, or a full second-order polynomial (bow). @default 'plane' */
  surface?: 'plane' | 'poly2';
  /** Subtract the median of each row's background pixels (scan-line alignment). @default true */
  alignRows?: boolean;
  /** Pixels above median + k·robust sigma of the residual are excluded from the background. @default 3 */
  exclusionK?: number;
  /** Excluded pixels are grown by this many px (square), so particle skirts stay out of the fit. @default 2 */
  exclusionDilationPx?: number;
  /** Maximum number of fit/exclude iterations. @default 8 */
  maxIterations?: number;
  /** Stop when fewer than this fraction of pixels change background status. @default 0.0005 */
  convergenceFraction?: number;
  /**
   * Or stop when the correction changed the map by less than this fraction of the background sigma (RMS over
   * pixels); 5% of the noise (e.g. 0.008 nm at 0.15 nm) is far below the 0.1 nm to which heights are read. @default 0.05
   */
  convergenceSigmaFraction?: number;
  /** A row with fewer background pixels than this is aligned on the median of the whole row (px). @default 8 */
  minBackgroundPerRow?: number;
}

/**
 * Background surface subtracted by levelling, in px about the image centre (xc, yc) = ((w−1)/2, (h−1)/2):
 * z = offsetNm + slopeX·(x−xc) + slopeY·(y−yc) + curvXX·(x−xc)² + curvXY·(x−xc)(y−yc) + curvYY·(y−yc)².
 */
export interface BackgroundSurface {
  readonly offsetNm: number;
  readonly slopeXNmPerPx: number;
  readonly slopeYNmPerPx: number;
  /** Zero for a plane. */
  readonly curvXXNmPerPx2: number;
  readonly curvXYNmPerPx2: number;
  readonly curvYYNmPerPx2: number;
}

/** Output of {@link levelHeightMap}. */
export interface LevelHeightMapResult {
  /** Levelled heights (nm); background median is 0. A new raster: the input is never changed. */
  readonly levelled: Raster;
  readonly surface: BackgroundSurface;
  /** Offset removed from each row after the surface (nm); all 0 when `alignRows` is false. */
  readonly rowOffsetsNm: Float64Array;
  /** Robust sigma (1.4826·MAD) of the levelled background (nm). */
  readonly backgroundSigmaNm: number;
  /** Background mask used in the last fit (1 = background). */
  readonly backgroundMask: Uint8Array;
  readonly diagnostics: {
    readonly nbIterations: number;
    readonly converged: boolean;
    readonly nbBackgroundPx: number;
    readonly backgroundFraction: number;
  };
}

// ---------------------------------------------------------------- thresholds

/** Output of every threshold function: pixels strictly above `thresholdNm` are foreground. */
export interface ThresholdResult {
  readonly method: 'robust' | 'otsu' | 'manual';
  readonly thresholdNm: number;
  readonly diagnostics: {
    /** Robust: background median and sigma (nm) and k. Otsu: between-class variance (nm²) and bins. */
    readonly backgroundMedianNm?: number;
    readonly backgroundSigmaNm?: number;
    readonly k?: number;
    readonly betweenClassVarianceNm2?: number;
    readonly nbBins?: number;
  };
}

/** Options of {@link robustThreshold}. */
export interface RobustThresholdOptions {
  /** Threshold = median + k·robust sigma of the background. @default 3 */
  k?: number;
  /** Sigma-clipping rounds that drop particles before the final median/MAD. @default 3 */
  clipIterations?: number;
  /** Background pixels (1) known from levelling; when given, no clipping is done. @default undefined */
  backgroundMask?: Uint8Array;
}

/** Options of {@link otsuThreshold}. */
export interface OtsuThresholdOptions {
  /** Histogram bins between the minimum and maximum height. @default 256 */
  nbBins?: number;
}

/** Output of {@link otsuHistogramThreshold}. */
export interface OtsuHistogramResult {
  /** Last bin of the lower class: bins 0..thresholdIndex are background. */
  readonly thresholdIndex: number;
  /** σ_B² = w₀w₁(μ₀ − μ₁)² at the optimum, in squared bin-value units. */
  readonly betweenClassVariance: number;
  readonly w0: number;
  readonly mu0: number;
  readonly mu1: number;
}

/** Options of {@link selectThreshold}. */
export type SelectThresholdOptions =
  | ({ method: 'robust' } & RobustThresholdOptions)
  | ({ method: 'otsu' } & OtsuThresholdOptions)
  | { method: 'manual'; thresholdNm: number };

// ---------------------------------------------------------------- detection

/** Options of {@link detectVesicles}. */
export interface DetectVesiclesOptions {
  /** Pixels strictly above this height are foreground (nm). Required: get it from {@link selectThreshold}. */
  thresholdNm: number;
  /** A local maximum becomes its own vesicle only if it rises this far above the saddle to a higher one (nm). @default 2 */
  minProminenceNm?: number;
  /** Maxima closer than this merge, whatever the saddle (px). @default 3 */
  minSeparationPx?: number;
  /** Regions smaller than this are dropped (px). @default 9 */
  minAreaPx?: number;
  /** Regions whose highest pixel is below this are dropped (nm). @default 2 */
  minHeightNm?: number;
  /** Regions whose highest pixel exceeds this are fiducial candidates, not vesicles (nm). EVs on mica are typically ≤ 100 nm high (common practice). @default 300 */
  beadMinHeightNm?: number;
  /** Drop regions that touch the image border. @default true */
  dropEdgeRegions?: boolean;
}

/** One labelled region (a vesicle or a fiducial candidate). */
export interface DetectedRegion {
  /** Value of this region in the label map (> 0). */
  readonly label: number;
  readonly areaPx: number;
  /** Highest pixel (nm) and its position (px). */
  readonly maxHeightNm: number;
  readonly peakPx: Point;
  /**
   * True when the watershed cut this region out of a connected foreground component that held other basins (a
   * touching pair or cluster): its footprint ends at a saddle line, not at the substrate.
   */
  readonly split: boolean;
  /** Inclusive bounding box (px). */
  readonly xMin: number;
  readonly yMin: number;
  readonly xMax: number;
  readonly yMax: number;
}

/** Output of {@link detectVesicles}. */
export interface DetectVesiclesResult {
  /** Row-major labels: 0 = background or dropped, else the `label` of a vesicle or fiducial candidate. */
  readonly labels: Int32Array;
  readonly width: number;
  readonly height: number;
  readonly vesicles: readonly DetectedRegion[];
  readonly fiducialCandidates: readonly DetectedRegion[];
  readonly diagnostics: {
    readonly thresholdNm: number;
    readonly nbForegroundPx: number;
    /** Regions after the watershed, before any filter. */
    readonly nbRegions: number;
    /** Watershed basins kept apart inside one connected foreground component. */
    readonly nbSplits: number;
    readonly nbDroppedEdge: number;
    readonly nbDroppedSmall: number;
    readonly nbDroppedLow: number;
  };
}

/**
 * Output of {@link labelComponents}. The statistics are indexed by label, 0 being the background (all zero pixels),
 * like the rows of OpenCV's `stats` and `centroids`. An empty label (a mask without background) has area 0,
 * xMin = width, yMin = height, xMax = yMax = −1 and a NaN centroid.
 */
export interface LabelComponentsResult {
  /** Row-major: 0 = background, else the component's label, 1…nbComponents in raster order of its first pixel. */
  readonly labels: Int32Array;
  /** Components, background not included. */
  readonly nbComponents: number;
  /** Pixels per label (px); length nbComponents + 1. */
  readonly areaPx: Int32Array;
  /** Inclusive bounding box per label (px); OpenCV's left, top, width = xMax − xMin + 1, height = yMax − yMin + 1. */
  readonly xMin: Int32Array;
  readonly yMin: Int32Array;
  readonly xMax: Int32Array;
  readonly yMax: Int32Array;
  /** Mean column and row of each label's pixels (px). */
  readonly centroidX: Float64Array;
  readonly centroidY: Float64Array;
}

// ---------------------------------------------------------------- measurement

/** Output of {@link sphericalCap}; all lengths nm. */
export interface SphericalCapResult {
  readonly baseRadiusNm: number;
  readonly heightNm: number;
  /** R_c = (a² + h²)/(2h). */
  readonly sphereRadiusNm: number;
  /** θ = 2·atan(h/a), inside the cap (deg). */
  readonly contactAngleDeg: number;
  /** V = πh(3a² + h²)/6 (nm³). */
  readonly volumeNm3: number;
  /** Curved area π(a² + h²) (nm²). */
  readonly capAreaNm2: number;
  /** Curved area plus base π(2a² + h²) (nm²). */
  readonly totalAreaNm2: number;
  /** (6V/π)^(1/3). */
  readonly volumeEquivalentDiameterNm: number;
  /** √(2a² + h²): sphere of the same total area. */
  readonly areaConservingDiameterNm: number;
}

/** Options of {@link fitSphericalCap}. */
export interface FitSphericalCapOptions {
  /** Only pixels higher than this are fitted (nm); pass the detection threshold. @default 0 */
  minHeightNm?: number;
  /** Gauss–Newton iterations at most. @default 30 */
  maxIterations?: number;
}

/** Output of {@link fitSphericalCap}: the sphere through the imaged surface (tip broadening included). */
export interface FitSphericalCapResult {
  /** Sphere centre projected on the image (px, sub-pixel). */
  readonly centrePx: Point;
  /** Sphere radius of the imaged surface (nm); R_c + R for a cap imaged with a ball tip of radius R. */
  readonly sphereRadiusNm: number;
  /** Top of the fitted sphere (nm). */
  readonly apexHeightNm: number;
  /** RMS orthogonal distance of the fitted pixels to the sphere (nm). */
  readonly rmsResidualNm: number;
  readonly nbPixels: number;
  readonly nbIterations: number;
}

/**
 * Why a vesicle's spherical-cap sizes are missing or not tip-corrected:
 * - `no_tip_radius`: no tip radius was given; the sizes are of the imaged (tip-broadened) cap, so base diameter,
 *   volume and equivalent-sphere diameter are too large and the contact angle too small;
 * - `tip_exceeds_image`: the imaged sphere is no wider than the tip itself (R_image ≤ R); no sizes;
 * - `overhang`: after the correction the cap would be more than a hemisphere (θ > 90°), which a tip cannot image;
 *   no sizes;
 * - `cap_fit_failed`: too few pixels, or a surface that is not a cap (flat, concave, irregular); no sizes.
 */
export type CapSizeFlag = 'no_tip_radius' | 'tip_exceeds_image' | 'overhang' | 'cap_fit_failed';

/** Output of {@link tipCorrectedCap}. */
export interface TipCorrectedCapResult {
  /** The corrected cap; null when the flag says the sizes are not possible. */
  readonly cap: SphericalCapResult | null;
  /** null when the cap is tip-corrected and sound. */
  readonly flag: CapSizeFlag | null;
}

/** Options of {@link measureVesicle}. */
export interface MeasureVesicleOptions {
  /** Tip apex radius for the broadening correction (nm); 0 = no correction. @default 0 */
  tipRadiusNm?: number;
  /** Half width of the window of the quadratic apex fit (px); 0 = use the highest pixel. @default 2 */
  apexFitHalfWidthPx?: number;
  /** Height of the slice the footprint was cut at (nm), used to extrapolate the cap base to 0. @default 0 */
  thresholdNm?: number;
}

/** Output of {@link measureVesicle}. */
export interface MeasureVesicleResult {
  readonly label: number;
  /** Height-weighted centroid (px, sub-pixel). */
  readonly centroidPx: Point;
  /** Highest pixel (nm). Biased upward by noise (maximum of several samples). */
  readonly maxHeightNm: number;
  /** Apex height from a local quadratic fit (nm); less noisy than the highest pixel. */
  readonly apexHeightNm: number;
  readonly meanHeightNm: number;
  readonly areaPx: number;
  readonly projectedAreaNm2: number;
  /** Threshold footprint diameter 2·√(A/π) (nm): tip-broadened and threshold-dependent. */
  readonly footprintDiameterNm: number;
  /** Σ max(h, 0)·pixel area over the region (nm³). */
  readonly volumeNm3: number;
  /** (π/4)·(number of pixel edges on the region border)·pixel size (nm). */
  readonly perimeterNm: number;
  /** 4πA/P²: 1 for a disk; a digitised disk of r px gives (r/(r+½))² to (r/(r−½))² depending on its sub-pixel phase. */
  readonly circularity: number;
  /** Footprint half-width at 0 nm before tip correction (nm). */
  readonly apparentBaseRadiusNm: number;
  /**
   * Spherical cap from a sphere fitted to the surface, corrected for the tip (R_c = R_image − R); uncorrected when
   * no tip radius was given (`capFlag` 'no_tip_radius'); null when `capFlag` says the sizes are not possible.
   */
  readonly cap: SphericalCapResult | null;
  readonly capFlag: CapSizeFlag | null;
  /** The sphere fitted to the imaged surface; null when the fit failed. */
  readonly capFit: FitSphericalCapResult | null;
  /** Cut from a touching pair or cluster by the watershed (see {@link DetectedRegion.split}). */
  readonly split: boolean;
  readonly diagnostics: {
    readonly apexFit: 'quadratic' | 'max_pixel';
    /** True when tipRadiusNm > 0 and the correction was applied. */
    readonly tipCorrected: boolean;
  };
}

// ---------------------------------------------------------------- pipeline

/** Options of {@link analyzeHeightMap}. */
export interface AnalyzeHeightMapOptions {
  /** @default {} */
  level?: LevelHeightMapOptions;
  /** @default { method: 'robust', k: 3 } */
  threshold?: SelectThresholdOptions;
  /** Detection options other than the threshold. @default {} */
  detect?: Omit<DetectVesiclesOptions, 'thresholdNm'>;
  /** @default {} */
  measure?: Omit<MeasureVesicleOptions, 'thresholdNm'>;
}

/** Output of {@link analyzeHeightMap}. */
export interface AnalyzeHeightMapResult {
  readonly pixelSizeNm: number;
  readonly levelling: LevelHeightMapResult;
  readonly threshold: ThresholdResult;
  readonly detection: DetectVesiclesResult;
  readonly labels: Int32Array;
  readonly vesicles: readonly MeasureVesicleResult[];
  readonly fiducialCandidates: readonly MeasureVesicleResult[];
}
